import { hashPassword } from '../../apps/api/src/sessions/password-hashing';
import { calibrationWorld, hoursAgo, pipetteRun } from '../calibrations/helpers';
import {
  bearer,
  seedBalance,
  seedCheckWeight,
  seedFactor,
  seedInstrument,
  seedLab,
  seedPerson,
  seedReferenceWeight,
  seedVessel,
  sessionFor,
} from '../support/factories';
import type { TestApp } from '../support/test-app';

/** Lab A with its cast, and one target object per write endpoint that changes something. */
export async function hostileWorld(t: TestApp) {
  const w = await calibrationWorld(t);
  const { prisma, cast } = w;
  const labA = cast.lab.id;
  const password = 'burette meniscus at eye level';
  const changer = await seedPerson(prisma, { displayName: 'Password Changer', labs: [{ labId: labA, role: 'analyst' }] });
  await prisma.person.update({
    where: { id: changer.id },
    data: { passwordHash: await hashPassword(password), passwordSetAt: new Date() },
  });

  const nets = ['24.9400', '24.9450', '24.9500'];
  const calibrationBody = pipetteRun(w, nets, { vesselId: (await seedVessel(prisma, labA)).id });
  const call = async (method: 'post', path: string, token: string, body: object, ifMatch?: string) => {
    const req = t.http[method](path).set(bearer(token));
    const res = await (ifMatch ? req.set('if-match', ifMatch) : req).send(body);
    if (res.status >= 300) throw new Error(`setup: ${path} answered ${res.status} ${JSON.stringify(res.body)}`);
    return res.body as { id: string };
  };
  const draft = async () =>
    (await call('post', '/v1/calibrations', cast.tokens.analyst, pipetteRun(w, nets, { vesselId: (await seedVessel(prisma, labA)).id })))
      .id;
  const submitted = await draft();
  await call('post', `/v1/calibrations/${submitted}/submit`, cast.tokens.analyst, {}, '"v1"');

  const items = {
    vessels: await seedVessel(prisma, labA),
    balances: await seedBalance(prisma, labA),
    'reference-weights': await seedReferenceWeight(prisma, labA),
    instruments: await seedInstrument(prisma, labA),
  };
  const factorVessel = await seedVessel(prisma, labA);
  return {
    t,
    prisma,
    labA,
    password,
    people: cast.people,
    tokens: { ...cast.tokens, passwordChanger: await sessionFor(prisma, changer.id) },
    calibrationBody,
    targets: {
      person: await seedPerson(prisma, { displayName: 'Target Analyst', labs: [{ labId: labA, role: 'analyst' }] }),
      lab: await seedLab(prisma, { name: 'Teaching laboratory' }),
      items,
      draft: await draft(),
      submitted,
      checkWeight: await seedCheckWeight(prisma, labA),
      checkedBalance: await seedBalance(prisma, labA),
      traceableBalance: w.balance,
      suspectThermometer: await seedInstrument(prisma, labA, { calibrationDate: hoursAgo(24 * 90) }),
      factor: await seedFactor(prisma, { labId: labA, personId: cast.people.analyst.id, vesselId: factorVessel.id }),
    },
    /** The stored version of an inventory target, for a current If-Match. */
    async versionOf(name: keyof typeof items): Promise<number> {
      const id = items[name].id;
      const where = { where: { id }, select: { version: true } } as const;
      const row =
        name === 'vessels'
          ? await prisma.vessel.findUniqueOrThrow(where)
          : name === 'balances'
            ? await prisma.balance.findUniqueOrThrow(where)
            : name === 'reference-weights'
              ? await prisma.referenceWeight.findUniqueOrThrow(where)
              : await prisma.instrument.findUniqueOrThrow(where);
      return row.version;
    },
  };
}
export type HostileWorld = Awaited<ReturnType<typeof hostileWorld>>;

/**
 * Everything stored, as one comparable value: the content of each table; for
 * the append-only ones (the audit trail, balance checks) and the sign-in
 * failures their count and newest key; sessions and service credentials by
 * count and revocations only, since every request refreshes their last use.
 */
export async function snapshot(t: TestApp): Promise<Record<string, string>> {
  const content = (table: string) =>
    `(SELECT count(*) || ':' || md5(coalesce(string_agg(x::text, '|' ORDER BY x::text), '')) FROM ${table} x)`;
  const tables = [
    'labs',
    'people',
    'lab_memberships',
    'vessels',
    'balances',
    'reference_weights',
    'instruments',
    'calibrations',
    'factors',
    'webhooks',
  ];
  const members = [
    ...tables.map((table) => `'${table}', ${content(table)}`),
    `'audit_entries', (SELECT count(*) || ':' || coalesce(max(seq), 0) FROM audit_entries)`,
    `'balance_checks', (SELECT count(*) || ':' || coalesce(max(created_at)::text, '') FROM balance_checks)`,
    `'sign_in_failures', (SELECT count(*) || ':' || coalesce(max(id), 0) FROM sign_in_failures)`,
    `'sessions', (SELECT count(*) || ':' || count(revoked_at) FROM sessions)`,
    `'service_credentials', (SELECT count(*) || ':' || count(revoked_at) FROM service_credentials)`,
  ];
  const rows = await t.database.prisma.$queryRawUnsafe<{ s: Record<string, string> }[]>(
    `SELECT json_build_object(${members.join(', ')}) AS s`,
  );
  return rows[0]?.s ?? {};
}

/** The tables whose content differs. */
export function changedTables(before: Record<string, string>, after: Record<string, string>): string[] {
  return Object.keys(before).filter((k) => before[k] !== after[k]);
}
