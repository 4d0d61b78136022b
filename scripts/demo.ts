import 'reflect-metadata';

import { createDatabase, openDatabaseServer, type PrismaClient } from '@registry/data';

import { AuditWriter } from '../apps/api/src/audit/audit-writer';
import type { SystemContext } from '../apps/api/src/auth/actor';
import { ConfigError, parseConfig } from '../apps/api/src/config/config.schema';
import { hashPassword, newInitialPassword } from '../apps/api/src/sessions/password-hashing';
import { resolveVessel } from '../apps/api/src/vessels/vessel-rules';
import { loadHistory } from './demo/history';
import { HISTORY_DAYS } from './demo/plan';
import { DEMO_BALANCES, DEMO_INSTRUMENTS, DEMO_LABS, DEMO_PEOPLE, DEMO_VESSELS, DEMO_WEIGHTS, type DemoVessel } from './demo/scenario';
import { databaseServerOptions } from '../apps/api/src/config/database-server-options';

const DAY_MS = 86_400_000;
const ctx: SystemContext = { actor: { kind: 'system' }, requestId: 'demo-data' };

/**
 * `npm run demo`: loads the demo scenario (a fictional municipal water
 * authority) into the registry, then a year of its history through the
 * service's own API (demo/history.ts), and prints the demo people's passwords.
 * Refuses to run twice. Never use it on a registry with real data.
 */
async function main(): Promise<void> {
  const started = Date.now();
  // The history drives the app in-process; its scheduler runs one pass at the end, not on a timer.
  const config = parseConfig({ ...process.env, SCHEDULER_ENABLED: 'false' });
  const server = await openDatabaseServer(databaseServerOptions(config, (m) => console.error(m)));
  const database = createDatabase({ databaseUrl: server.url, poolMax: 4 });
  try {
    if (await database.prisma.lab.findUnique({ where: { code: DEMO_LABS[0].code } })) {
      console.log(`The demo data is already loaded (lab ${DEMO_LABS[0].code} exists); nothing changed.`);
      return;
    }
    const passwords = await Promise.all(
      DEMO_PEOPLE.map(async () => {
        const password = newInitialPassword();
        return { password, hash: await hashPassword(password) };
      }),
    );
    const counts = await database.prisma.$transaction(
      (tx) =>
        load(
          tx as unknown as PrismaClient,
          passwords.map((p) => p.hash),
          new Date(),
        ),
      { timeout: 120_000 },
    );
    console.log(`Demo data loaded: ${counts}.`);
    const history = await loadHistory(config, database, new Date()).catch((err: unknown) => {
      // The scenario is committed and each step of the history is its own transaction: say what is left.
      throw new Error(
        `the scenario is loaded but its history stopped part-way (${(err as Error).message}); ` +
          'start again from an empty registry (a new DATA_DIR or database) to load the demo.',
      );
    });
    console.log(
      `History of ${HISTORY_DAYS} days loaded through the API: ${history.calibrations} calibrations, ` +
        `${history.checks} balance checks (${history.requests} requests, ${((Date.now() - started) / 1000).toFixed(1)} s).`,
    );
    console.log('Demo people (password shown only now):');
    DEMO_PEOPLE.forEach((p, i) => {
      const role = p.registryRole ?? p.labs?.map((m) => `${m.role} ${m.lab}`).join(', ');
      console.log(`  ${p.email.padEnd(36)} ${passwords[i]?.password}   ${role}`);
    });
  } finally {
    await database.close();
    await server.stop();
  }
}

async function load(tx: PrismaClient, hashes: string[], now: Date): Promise<string> {
  const audit = new AuditWriter();
  const day = (offset: number) => new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), now.getUTCDate()) + offset * DAY_MS);
  // Items are registered on the first day of the history, so their due dates run from then.
  const createdAt = day(-HISTORY_DAYS);
  const labs = new Map<string, string>();
  for (const lab of DEMO_LABS) {
    const created = await tx.lab.create({ data: lab });
    labs.set(lab.code, created.id);
    await audit.record(tx, ctx, {
      action: 'create',
      entityType: 'lab',
      entityId: created.id,
      labId: created.id,
      newValues: lab,
      reason: 'demo data',
    });
  }
  const labId = (code: string) => labs.get(code) as string;
  for (const [i, p] of DEMO_PEOPLE.entries()) {
    const person = await tx.person.create({
      data: {
        email: p.email,
        displayName: p.displayName,
        registryRole: p.registryRole ?? null,
        passwordHash: hashes[i] ?? null,
        passwordSetAt: now,
      },
    });
    await audit.record(tx, ctx, {
      action: 'create',
      entityType: 'person',
      entityId: person.id,
      newValues: { email: p.email, displayName: p.displayName },
      reason: 'demo data',
    });
    for (const m of p.labs ?? []) {
      await tx.labMembership.create({
        data: { labId: labId(m.lab), personId: person.id, labRole: m.role, externalRef: m.externalRef ?? null },
      });
      await audit.record(tx, ctx, {
        action: 'create',
        entityType: 'lab-membership',
        entityId: `${labId(m.lab)}/${person.id}`,
        labId: labId(m.lab),
        newValues: m,
        reason: 'demo data',
      });
    }
  }
  for (const v of DEMO_VESSELS) {
    const vessel = await tx.vessel.create({ data: { ...vesselData(v, labId(v.lab)), createdAt } });
    await audit.record(tx, ctx, {
      action: 'create',
      entityType: 'vessel',
      entityId: vessel.id,
      labId: vessel.labId,
      newValues: vessel,
      reason: 'demo data',
    });
  }
  for (const b of DEMO_BALANCES) {
    const { lab, tag, calibratedDaysAgo, dueInDays, ...rest } = b;
    const balance = await tx.balance.create({
      data: {
        ...rest,
        createdAt,
        labId: labId(lab),
        assetTag: tag,
        externalCalibrationDate: day(-calibratedDaysAgo),
        externalCalibrationDue: day(dueInDays),
        externalCalibrationCertificate: `DKX-${tag}-${day(-calibratedDaysAgo).getUTCFullYear()}`,
        externalCalibrationProvider: 'Regional calibration service (demo)',
      },
    });
    await audit.record(tx, ctx, {
      action: 'create',
      entityType: 'balance',
      entityId: balance.id,
      labId: balance.labId,
      newValues: balance,
      reason: 'demo data',
    });
  }
  for (const w of DEMO_WEIGHTS) {
    const { lab, tag, dueInDays, ...rest } = w;
    const weight = await tx.referenceWeight.create({
      data: {
        ...rest,
        createdAt,
        labId: labId(lab),
        assetTag: tag,
        densityKgPerM3: '8000',
        certificateNumber: `W-${tag}`,
        certificateDue: day(dueInDays),
      },
    });
    await audit.record(tx, ctx, {
      action: 'create',
      entityType: 'reference-weight',
      entityId: weight.id,
      labId: weight.labId,
      newValues: weight,
      reason: 'demo data',
    });
  }
  for (const ins of DEMO_INSTRUMENTS) {
    const { lab, tag, dueInDays, ...rest } = ins;
    const instrument = await tx.instrument.create({
      data: {
        ...rest,
        createdAt,
        labId: labId(lab),
        assetTag: tag,
        calibrationDate: day(dueInDays - 365),
        calibrationDue: day(dueInDays),
        certificateNumber: `T-${tag}`,
      },
    });
    await audit.record(tx, ctx, {
      action: 'create',
      entityType: 'instrument',
      entityId: instrument.id,
      labId: instrument.labId,
      newValues: instrument,
      reason: 'demo data',
    });
  }
  return (
    `${DEMO_LABS.length} labs, ${DEMO_PEOPLE.length} people, ${DEMO_VESSELS.length} vessels, ${DEMO_BALANCES.length} balances, ` +
    `${DEMO_WEIGHTS.length} reference weights, ${DEMO_INSTRUMENTS.length} instruments`
  );
}

/** The same rules as POST /v1/vessels: delivery mode, expansion coefficient and class limit. */
function vesselData(v: DemoVessel, labId: string) {
  const resolution = resolveVessel({
    kind: v.kind,
    deliveryMode: v.kind === 'graduated-cylinder' ? 'contain' : null,
    nominalVolumeMl: v.nominalMl,
    graduationIntervalMl: v.graduationMl ?? null,
    accuracyClass: v.accuracyClass,
    classStandard: null,
    material: v.material,
    expansionCoefficientPerK: null,
    limitOverrideMl: null,
    limitOverrideReason: null,
  });
  if (!resolution.ok) throw new Error(`demo vessel ${v.tag}: ${resolution.errors.map((e) => `${e.field} ${e.reason}`).join('; ')}`);
  const r = resolution.value;
  return {
    labId,
    assetTag: v.tag,
    kind: v.kind,
    nominalVolumeMl: v.nominalMl,
    accuracyClass: v.accuracyClass,
    deliveryMode: r.deliveryMode,
    graduationIntervalMl: r.graduationIntervalMl,
    classStandard: r.classStandard,
    material: r.material,
    expansionCoefficientPerK: r.expansionCoefficientPerK,
    limitMl: r.limitMl,
    limitSource: r.limitSource,
    location: v.location,
    status: v.status ?? 'in-service',
    notes: v.notes ?? null,
  };
}

main().catch((err: unknown) => {
  console.error(err instanceof ConfigError ? err.message : `Could not load the demo data: ${(err as Error).message}`);
  process.exit(1);
});
