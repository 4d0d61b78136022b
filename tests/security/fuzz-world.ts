import { randomBytes } from 'node:crypto';

import { sha256 } from '../../apps/api/src/auth/tokens';
import { seedFailedDelivery, seedWebhook } from '../delivery/delivery-support';
import { hostileWorld } from '../registry/hostile-input.world';
import { bearer, seedBalance, seedCompletedExport, seedCredential, seedPerson, sessionFor } from '../support/factories';
import type { TestApp } from '../support/test-app';
import type { IdPool, OpenApiDocument } from './openapi-arbitraries';

/**
 * The objects fuzzed requests point at: lab A of the hostile-input world plus
 * one object of every other kind, an administrator's session and a service
 * credential with every scope for every lab. The administrator and that
 * credential are not in the identifier pool, so a fuzzed request cannot
 * disable or revoke the caller itself.
 */
export async function fuzzWorld(t: TestApp) {
  const w = await hostileWorld(t);
  const { prisma, labA, people, targets } = w;
  const admin = people.admin.id;
  const credential = await seedCredential(prisma, admin, ['factors:read', 'corrections:write', 'calculations:run', 'inventory:read']);
  const spareCredential = (await seedCredential(prisma, admin, ['inventory:read'])).credential;
  const webhook = await seedWebhook(prisma, labA, admin);
  const delivery = await seedFailedDelivery(prisma, labA, admin);
  const policy = await prisma.duePolicy.create({
    data: { labId: labA, subjectKind: 'instrument', intervalDays: 365, dueSoonDays: 30 },
  });
  const notice = await prisma.notice.create({
    data: {
      labId: labA,
      eventKind: 'overdue',
      subjectKind: 'reference-weight',
      subjectId: targets.checkWeight.id,
      subjectLabel: targets.checkWeight.assetTag,
      dueOn: new Date('2026-11-20T00:00:00Z'),
    },
  });
  await prisma.noticeRecipient.create({ data: { noticeId: notice.id, personId: people.manager.id } });
  const feed = await prisma.calendarFeed.create({
    data: {
      labId: labA,
      name: 'DW-CHEM due dates',
      tokenHash: sha256(`rcal_${randomBytes(32).toString('base64url')}`),
      createdById: people.manager.id,
    },
  });
  const exported = await seedCompletedExport(prisma, admin, labA);
  // A check recorded through the API (the factories' placeholder checks have no results to show).
  const checked = await seedBalance(prisma, labA);
  const recorded = await t.http
    .post(`/v1/balances/${checked.id}/checks`)
    .set(bearer(w.tokens.manager))
    .send({ kind: 'quick', referenceWeightId: targets.checkWeight.id, readingsG: ['100.0001'], limitG: '0.0003' });
  if (recorded.status !== 201) throw new Error(`setup: check answered ${recorded.status} ${recorded.text}`);
  const check = recorded.body as { id: string };

  const items = targets.items;
  const vessels = [items.vessels.id, targets.factor.vesselId];
  // Not the world's traceable balance: the factories gave it a placeholder check the API cannot present.
  const balances = [checked.id, items.balances.id, targets.checkedBalance.id];
  const instruments = [items.instruments.id, targets.suspectThermometer.id];
  const weights = [items['reference-weights'].id, targets.checkWeight.id];
  const persons = [people.analyst.id, people.manager.id, targets.person.id];
  const calibrations = [targets.draft, targets.submitted];
  const byName: Record<string, readonly string[]> = {
    labId: [labA, targets.lab.id],
    labIds: [labA, targets.lab.id],
    personId: persons,
    performerId: persons,
    vesselId: vessels,
    balanceId: balances,
    thermometerId: instruments,
    instrumentId: instruments,
    referenceWeightId: weights,
    credentialId: [spareCredential.id],
    policyId: [policy.id],
    noticeId: [notice.id],
    feedId: [feed.id],
    webhookId: [webhook.id],
    deliveryId: [delivery.id],
    exportId: [exported.id],
    checkId: [check.id],
    calibrationId: calibrations,
    factorId: [targets.factor.id],
    subjectId: [...vessels, ...balances],
    entityId: [...vessels, ...persons],
    actorId: persons,
    id: [...vessels, ...balances, ...instruments, ...weights, ...calibrations, targets.factor.id],
    email: [people.analyst.email, people.manager.email, targets.person.email],
    code: ['not-found', 'validation-failed', 'no-such-problem'],
  };
  const ids: IdPool = { byName, any: Object.values(byName).flat() };

  return {
    ...w,
    ids,
    tokens: { ...w.tokens, credential: credential.key },
    /** A new administrator's session, for calls that end the caller's session. */
    async throwawayAdmin(): Promise<string> {
      const person = await seedPerson(prisma, { displayName: 'Fuzz Admin', registryRole: 'administrator' });
      return sessionFor(prisma, person.id);
    },
    async openApi(): Promise<OpenApiDocument> {
      const res = await t.http.get('/openapi.json');
      if (res.status !== 200) throw new Error(`setup: /openapi.json answered ${res.status}`);
      return res.body as OpenApiDocument;
    },
  };
}
export type FuzzWorld = Awaited<ReturnType<typeof fuzzWorld>>;

/**
 * Every table as one comparable value: the row count and content of each,
 * except that the append-only audit trail is compared by count and newest
 * sequence number, and sessions and credentials by count and revocations
 * (every authenticated request refreshes their last use).
 */
export async function tableSnapshot(t: TestApp): Promise<Record<string, string>> {
  const prisma = t.database.prisma;
  tables ??= (
    await prisma.$queryRaw<{ name: string }[]>`
      SELECT table_name AS name FROM information_schema.tables
      WHERE table_schema = 'public' AND table_type = 'BASE TABLE' AND table_name <> '_prisma_migrations'
      ORDER BY table_name`
  ).map((r) => r.name);
  const members = tables.map((table) => {
    const summary =
      table === 'audit_entries'
        ? `(SELECT count(*) || ':' || coalesce(max(seq), 0) FROM audit_entries)`
        : table === 'sessions' || table === 'service_credentials'
          ? `(SELECT count(*) || ':' || count(revoked_at) FROM ${table})`
          : `(SELECT count(*) || ':' || md5(coalesce(string_agg(x::text, '|' ORDER BY x::text), '')) FROM ${table} x)`;
    return `SELECT '${table}' AS name, ${summary} AS summary`;
  });
  const rows = await prisma.$queryRawUnsafe<{ name: string; summary: string }[]>(members.join(' UNION ALL '));
  return Object.fromEntries(rows.map((r) => [r.name, r.summary]));
}
let tables: string[] | undefined;
