import { Client } from 'pg';

import { newCredentialKey } from '../../apps/api/src/auth/tokens';
import { hashPassword } from '../../apps/api/src/sessions/password-hashing';
import { CHECK_LIBRARY_VERSION, type CheckRow, checksOf, planChecks } from './balance-checks';
import { buildVesselTypes } from './calibration-templates';
import { BALANCE_MODELS, VESSEL_MODELS } from './catalogue';
import { type CopyValue, copyChunks, copyRows, serializeRows } from './copy-writer';
import {
  type AuditRow,
  CALIBRATION_COLUMNS,
  FACTOR_COLUMNS,
  type HistoryContext,
  VESSEL_COLUMNS,
  buildBatch,
  calibrationCounts,
} from './history';
import { Progress } from './progress';
import { SeededRandom } from './random';
import type { SeedSize } from './sizes';
import { DAY_MS, type Lab, type World, buildWorld } from './world';

/*
 * Fills an empty, migrated registry. Everything goes in with COPY, with every constraint,
 * index and trigger of the migrations in place; audit entries go through the chaining
 * trigger like any insert. Randomness comes from the seed only, so the same seed and as-of
 * date give the same rows, except what the database or a secret decides: audit times and
 * hashes, the credential key and password hashes.
 */

export interface SeedOptions {
  readonly size: SeedSize;
  readonly seed: number;
  readonly asOf: Date;
  /** Calibration runs computed per vessel model. */
  readonly templatesPerModel: number;
  /** Vessels per batch of history. */
  readonly batchVessels: number;
  /** How many (person, vessel) pairs with a current factor to hand to benchmarks. */
  readonly samplePairs: number;
}

export interface SeedResult {
  readonly credentialKey: string;
  readonly password: string;
  readonly signIn: { readonly email: string; readonly role: string; readonly lab: string | null }[];
  readonly labs: { readonly id: string; readonly code: string }[];
  readonly pairs: { personId: string; email: string; vesselId: string; assetTag: string; indicatedVolumeMl: string }[];
  readonly templates: number;
}

const REQUEST_ID = 'bench-seed';
const AUDIT_COLUMNS = [
  'actor_kind',
  'actor_id',
  'action',
  'entity_type',
  'entity_id',
  'lab_id',
  'old_values',
  'new_values',
  'reason',
  'request_id',
  'entry_hash',
];
const FACTOR_VALIDITY_DAYS = 365;

const auditRows = (rows: readonly AuditRow[]) => rows.map((r): CopyValue[] => [...r, REQUEST_ID, '\\x']);

/*
 * The triggers' queries (the due dates kept by due_track, the audit chain's head) are planned once per
 * connection, with the statistics of the moment: planned on empty tables they scan whole tables and the
 * load slows down row by row. Fresh statistics now and then, as the tables grow, keep them on indexes.
 */
const REFRESH_STATISTICS_AFTER = new Set([0, 2, 8, 32, 128, 512]);
const GROWING_TABLES = ['vessels', 'calibrations', 'factors', 'balance_checks', 'balances', 'due_dates', 'audit_entries'];

async function refreshStatistics(db: Client): Promise<void> {
  await db.query(`ANALYZE ${GROWING_TABLES.join(', ')}`);
}

/** Connections: one writes the audit trail (in batch order, so the chain's order is the seed's), two the data. */
const DATA_CONNECTIONS = 2;

async function connect(url: string): Promise<Client> {
  const client = new Client({ connectionString: url });
  await client.connect();
  // A crash loses at most the last moments of the load; nothing else changes.
  await client.query('SET synchronous_commit = off');
  // The due-date trigger looks its subject up in one view over every kind of item (due_computed): a custom
  // plan for each row replans the whole view (about 5 ms a row here); the generic plan is reused (under 1 ms).
  // Same rows and results, planned once per connection.
  await client.query('SET plan_cache_mode = force_generic_plan');
  return client;
}

export async function seedRegistry(ownerUrl: string, o: SeedOptions): Promise<SeedResult> {
  const db = await connect(ownerUrl);
  const data: Client[] = [];
  try {
    for (let i = 0; i < DATA_CONNECTIONS; i++) data.push(await connect(ownerUrl));
    return await seedWith(db, data, o);
  } finally {
    for (const c of [db, ...data]) await c.end();
  }
}

async function seedWith(db: Client, data: readonly Client[], o: SeedOptions): Promise<SeedResult> {
  const { rows } = await db.query<{ n: string }>('SELECT count(*)::text AS n FROM labs');
  if (rows[0]?.n !== '0') throw new Error('the database already holds labs: seed an empty registry (a fresh data folder or database)');
  const rnd = new SeededRandom(o.seed);
  const world = buildWorld(o.size, o.asOf, rnd);
  const started = Date.now();
  const types = buildVesselTypes(VESSEL_MODELS, o.templatesPerModel, rnd.fork('templates'));
  const templates = types.reduce((n, t) => n + t.templates.length, 0);
  console.error(`computed ${templates} calibration runs with the metrology library in ${Date.now() - started} ms`);
  planChecks(world, o.size.balanceChecks, rnd.fork('check-plan'));

  const password = `bench-${new SeededRandom(o.seed ^ 0x5eed).uuid().slice(0, 18)}`;
  const passwordHash = await hashPassword(password);
  const credential = await seedPeopleAndItems(db, world, passwordHash);
  await seedChecks(db, world, o.size.balanceChecks, rnd);

  const ctx: HistoryContext = {
    world,
    types,
    typeWeights: types.map((t) => [t, t.model.weight] as const),
    labWeights: world.labs.map((l, i) => [l, i < 3 ? 2 : 1] as const),
    tagCounters: new Map(),
    factorValidityDays: FACTOR_VALIDITY_DAYS,
    pairEvery: Math.max(1, Math.floor((o.size.vessels * 1.5) / o.samplePairs)),
    pairCounter: { n: 0 },
  };
  const counts = calibrationCounts(o.size.calibrations, o.size.vessels, rnd.fork('counts'));
  const history = rnd.fork('history');
  const ids = rnd.fork('history-ids');
  const pairs: SeedResult['pairs'] = [];
  const bar = new Progress('calibrations', o.size.calibrations, 'calibrations');
  // A pipeline: batches are generated here in order; each goes to the next data connection (its vessels,
  // calibrations and factors), then its audit entries to the audit connection, in batch order.
  const dataTasks: Promise<void>[] = data.map(() => Promise.resolve());
  const auditTasks: Promise<void>[] = [];
  let auditTail: Promise<void> = Promise.resolve();
  const handled = (p: Promise<void>) => {
    p.catch(() => undefined);
    return p;
  };
  let index = 0;
  for (let from = 0; from < o.size.vessels; from += o.batchVessels, index++) {
    const slot = index % data.length;
    await dataTasks[slot];
    if (index > 2 * data.length) await auditTasks[index - 2 * data.length];
    const to = Math.min(o.size.vessels, from + o.batchVessels);
    const parts = [];
    for (let start = from; start < to; start += 50) {
      parts.push(buildBatch(ctx, counts, start, Math.min(to, start + 50), history, ids));
      // Let the connections stream while the batch is built.
      await new Promise((resolve) => setImmediate(resolve));
    }
    const vessels = serializeRows(parts.flatMap((b) => b.vessels));
    const calibrations = serializeRows(parts.flatMap((b) => b.calibrations));
    const factors = serializeRows(parts.flatMap((b) => b.factors));
    const audit = serializeRows(auditRows(parts.flatMap((b) => b.audit)));
    for (const p of parts.flatMap((b) => b.currentPairs)) {
      if (pairs.length < o.samplePairs) {
        pairs.push({
          personId: p.person.id,
          email: p.person.email,
          vesselId: p.vesselId,
          assetTag: p.assetTag,
          indicatedVolumeMl: p.indicatedVolumeMl,
        });
      }
    }
    const conn = data[slot] as Client;
    const done = handled(
      (async () => {
        await copyChunks(conn, 'vessels', VESSEL_COLUMNS, vessels);
        await copyChunks(conn, 'calibrations', CALIBRATION_COLUMNS, calibrations);
        bar.tick(calibrations.count);
        await copyChunks(conn, 'factors', FACTOR_COLUMNS, factors);
      })(),
    );
    dataTasks[slot] = done;
    auditTail = handled(Promise.all([auditTail, done]).then(() => copyChunks(db, 'audit_entries', AUDIT_COLUMNS, audit)));
    if (REFRESH_STATISTICS_AFTER.has(index)) auditTail = handled(auditTail.then(() => refreshStatistics(db)));
    auditTasks.push(auditTail);
  }
  await Promise.all([...dataTasks, auditTail]);
  bar.finish();
  const analyzed = Date.now();
  await db.query('ANALYZE');
  console.error(`ANALYZE in ${Date.now() - analyzed} ms`);
  return {
    credentialKey: credential,
    password,
    signIn: world.people
      .filter((p) => p.signsIn)
      .map((p) => ({
        email: p.email,
        role: p.registryRole ?? 'manager',
        lab: p.memberships[0] ? (world.labs.find((l) => l.id === p.memberships[0]?.labId)?.code ?? null) : null,
      })),
    labs: world.labs.map((l) => ({ id: l.id, code: l.code })),
    pairs,
    templates,
  };
}

/** Labs, people, memberships, balances, weights, instruments and a service credential, each with its audit entry. */
async function seedPeopleAndItems(db: Client, world: World, passwordHash: string): Promise<string> {
  const audit: AuditRow[] = [];
  const created = (entityType: string, entityId: string, labId: string | null, values: object): AuditRow => [
    'system',
    null,
    'create',
    entityType,
    entityId,
    labId,
    null,
    values,
    'bench data',
  ];
  await copyRows(
    db,
    'labs',
    ['id', 'code', 'name', 'time_zone', 'created_at', 'updated_at'],
    world.labs.map((l) => {
      audit.push(created('lab', l.id, l.id, { code: l.code, name: l.name, timeZone: 'Europe/Berlin' }));
      return [l.id, l.code, l.name, 'Europe/Berlin', l.createdAt, l.createdAt];
    }),
  );
  await copyRows(
    db,
    'people',
    ['id', 'email', 'display_name', 'status', 'registry_role', 'password_hash', 'password_set_at', 'version', 'created_at', 'updated_at'],
    world.people.map((p) => {
      audit.push(created('person', p.id, null, { email: p.email, displayName: p.displayName }));
      return [
        p.id,
        p.email,
        p.displayName,
        p.status,
        p.registryRole,
        p.signsIn ? passwordHash : null,
        p.signsIn ? p.createdAt : null,
        p.status === 'active' ? 1 : 2,
        p.createdAt,
        p.createdAt,
      ];
    }),
  );
  await copyRows(
    db,
    'lab_memberships',
    ['lab_id', 'person_id', 'lab_role', 'external_ref', 'created_at'],
    world.people.flatMap((p) =>
      p.memberships.map((m) => {
        audit.push(created('lab-membership', `${m.labId}/${p.id}`, m.labId, { lab: m.labId, role: m.role, externalRef: m.externalRef }));
        return [m.labId, p.id, m.role, m.externalRef, p.createdAt];
      }),
    ),
  );
  const labs: readonly Lab[] = world.labs;
  await copyRows(
    db,
    'balances',
    [
      'id',
      'lab_id',
      'asset_tag',
      'maker_serial',
      'model',
      'capacity_g',
      'readability_g',
      'location',
      'status',
      'external_calibration_date',
      'external_calibration_certificate',
      'external_calibration_provider',
      'external_calibration_due',
      'version',
      'created_at',
      'updated_at',
    ],
    labs.flatMap((l) =>
      l.balances.map((b) => {
        const m = BALANCE_MODELS[b.balanceClass];
        audit.push(
          created('balance', b.id, l.id, { assetTag: b.assetTag, model: m.model, capacityG: m.capacityG, readabilityG: m.readabilityG }),
        );
        return [
          b.id,
          l.id,
          b.assetTag,
          b.serial,
          m.model,
          m.capacityG,
          m.readabilityG,
          b.location,
          b.failsAtEnd ? 'quarantined' : 'in-service',
          b.externalDate,
          b.certificate,
          'Regional calibration service',
          b.externalDue,
          b.failsAtEnd ? 2 : 1,
          l.createdAt,
          l.createdAt,
        ];
      }),
    ),
  );
  await copyRows(
    db,
    'reference_weights',
    [
      'id',
      'lab_id',
      'asset_tag',
      'nominal_mass_g',
      'oiml_class',
      'conventional_mass_g',
      'uncertainty_g',
      'density_kg_per_m3',
      'certificate_number',
      'certificate_due',
      'location',
      'created_at',
      'updated_at',
    ],
    labs.flatMap((l) =>
      l.weights.map((w) => {
        audit.push(
          created('reference-weight', w.id, l.id, { assetTag: w.assetTag, nominalMassG: String(w.nominalG), oimlClass: w.oimlClass }),
        );
        return [
          w.id,
          l.id,
          w.assetTag,
          w.nominalG,
          w.oimlClass,
          w.conventionalMassG,
          w.uncertaintyG,
          8000,
          w.certificate,
          w.certificateDue,
          'Weighing room, weight case',
          l.createdAt,
          l.createdAt,
        ];
      }),
    ),
  );
  await copyRows(
    db,
    'instruments',
    [
      'id',
      'lab_id',
      'asset_tag',
      'kind',
      'model',
      'calibration_date',
      'certificate_number',
      'calibration_due',
      'temperature_uncertainty_k',
      'pressure_uncertainty_pa',
      'humidity_uncertainty_percent',
      'location',
      'created_at',
      'updated_at',
    ],
    labs.flatMap((l) =>
      l.instruments.map((i) => {
        audit.push(created('instrument', i.id, l.id, { assetTag: i.assetTag, kind: i.kind }));
        const temperature = i.kind === 'barometer' ? null : '0.1';
        return [
          i.id,
          l.id,
          i.assetTag,
          i.kind,
          null,
          i.calibrationDate,
          i.certificate,
          i.calibrationDue,
          temperature,
          i.kind === 'barometer' ? '50' : null,
          i.kind === 'thermohygrometer' ? '2' : null,
          'Weighing room',
          l.createdAt,
          l.createdAt,
        ];
      }),
    ),
  );
  const { key, keyId, secretHash } = newCredentialKey();
  const credentialId = new SeededRandom(world.labs.length).uuid();
  await db.query(
    `INSERT INTO service_credentials (id, name, key_id, secret_hash, scopes, all_labs, created_by)
     VALUES ($1, 'bench-seed', $2, $3, ARRAY['factors:read', 'corrections:write', 'calculations:run', 'inventory:read'], true, $4)`,
    [credentialId, keyId, Buffer.from(secretHash), world.admin.id],
  );
  audit.push([
    'person',
    world.admin.id,
    'create',
    'service-credential',
    credentialId,
    null,
    null,
    { name: 'bench-seed', keyId, allLabs: true },
    'bench data',
  ]);
  await copyRows(db, 'audit_entries', AUDIT_COLUMNS, auditRows(audit));
  return key;
}

const CHECK_COLUMNS = [
  'id',
  'lab_id',
  'balance_id',
  'performed_by_id',
  'performed_at',
  'kind',
  'reference_weight_id',
  'inputs',
  'results',
  'minimum_weight_g',
  'passed',
  'library_version',
  'created_at',
];

/** Every balance's checks, lab by lab, with the audit entries the service writes for them. */
async function seedChecks(db: Client, world: World, total: number, rnd: SeededRandom): Promise<void> {
  const bar = new Progress('balance checks', total, 'checks');
  const r = rnd.fork('checks');
  const ids = rnd.fork('check-ids');
  for (const lab of world.labs) {
    const audit: AuditRow[] = [];
    const rows = function* (): Generator<CopyValue[]> {
      for (const balance of lab.balances) {
        for (const c of checksOf(lab, balance, r, ids) as Generator<CheckRow>) {
          audit.push(checkAudit(c));
          if (c.minimumWeightG !== null && c.passed) {
            audit.push([
              'person',
              c.performer.id,
              'set-minimum-weight',
              'balance',
              balance.id,
              lab.id,
              null,
              { minimumWeightG: c.minimumWeightG, minimumWeightDeterminedAt: c.performedAt, balanceCheckId: c.id },
              `USP <41> check ${c.id} passed: minimum weight 2000 · s`,
            ]);
          }
          if (!c.passed) {
            audit.push([
              'person',
              c.performer.id,
              'quarantine',
              'balance',
              balance.id,
              lab.id,
              { status: 'in-service', version: 1 },
              { status: 'quarantined', version: 2, balanceCheckId: c.id },
              `Quarantined: failed ${c.kind} check ${c.id}.`,
            ]);
          }
          yield [
            c.id,
            lab.id,
            balance.id,
            c.performer.id,
            c.performedAt,
            c.kind,
            c.weightId,
            c.inputs as object,
            c.results as object,
            c.minimumWeightG === null ? null : roundUp9(c.minimumWeightG),
            c.passed,
            CHECK_LIBRARY_VERSION,
            c.createdAt,
          ];
        }
      }
    };
    await copyRows(db, 'balance_checks', CHECK_COLUMNS, rows(), (n) => bar.tick(n));
    await copyRows(db, 'audit_entries', AUDIT_COLUMNS, auditRows(audit));
    if (lab === world.labs[0] || lab === world.labs[3]) await refreshStatistics(db);
  }
  bar.finish();
  // What the passing USP <41> checks left on each balance: its minimum weight.
  const withMinimum = world.labs.flatMap((l) => l.balances).filter((b) => b.minimumWeightG !== null);
  await db.query(
    `UPDATE balances b SET minimum_weight_g = m.g, minimum_weight_determined_at = m.at, version = b.version + 1
       FROM unnest($1::uuid[], $2::numeric[], $3::timestamptz[]) AS m(id, g, at) WHERE b.id = m.id`,
    [withMinimum.map((b) => b.id), withMinimum.map((b) => roundUp9(b.minimumWeightG as string)), withMinimum.map((b) => b.minimumWeightAt)],
  );
}

/** The column keeps 9 decimals; rounded up like the service does. */
function roundUp9(g: string): string {
  const [int, frac = ''] = g.split('.');
  if (frac.length <= 9) return g;
  const scaled = BigInt(`${int}${frac.slice(0, 9)}`) + (/[1-9]/.test(frac.slice(9)) ? 1n : 0n);
  const s = scaled.toString().padStart(10, '0');
  return `${s.slice(0, -9)}.${s.slice(-9)}`;
}

function checkAudit(c: CheckRow): AuditRow {
  return [
    'person',
    c.performer.id,
    'create',
    'balance-check',
    c.id,
    c.lab.id,
    null,
    {
      id: c.id,
      balanceId: c.balance.id,
      kind: c.kind,
      performedAt: c.performedAt,
      passed: c.passed,
      minimumWeightG: c.minimumWeightG,
      referenceWeightId: c.weightId,
    },
    null,
  ];
}

export { DAY_MS };
