import { randomBytes } from 'node:crypto';

import { sha256 } from '../../apps/api/src/auth/tokens';
import { EXAMPLES } from '../../apps/api/src/calculations/calculations.examples';
import { ACCURACY_CLASSES, VESSEL_KINDS } from '@registry/metrology';
import {
  bearer,
  seedBalance,
  seedCompletedExport,
  seedCredential,
  seedInstrument,
  seedPerson,
  seedReferenceWeight,
  seedVessel,
} from '../support/factories';
import { startTestApp } from '../support/test-app';
import { withRegisteredRoutes } from '../support/registered-routes';
import { seedFailedDelivery, seedWebhook, TEST_WEBHOOK_KEY } from '../delivery/delivery-support';
import { type Caller, CALLERS, buildWorld, fresh, NEW_PASSWORD, PASSWORD, type World } from './authorization-world';

/*
 * Every route of the application, called by every kind of caller, against the
 * status each must get. One table drives it all; the app's own route list
 * (collected from Fastify as the app starts) must equal the table's, so a new
 * route fails this file until it is given its row.
 *
 * Columns (see authorization-world.ts):
 *   anon  no token                          otp   an administrator still on a one-time password
 *   adm   administrator                     f:r   credential with factors:read, every lab
 *   aud   auditor                           c:w   credential with corrections:write, every lab
 *   mgA   manager of lab A                  c:r   credential with calculations:run, every lab
 *   anA   analyst of lab A                  i:r   credential with inventory:read, every lab
 *   mgB   manager of lab B (the other lab)  crB   credential with every scope, lab B only
 *   exp   a session past its expiry         rev   a signed-out session
 * Path parameters name objects of lab A. 404: an object of a lab the caller
 * cannot read; 403: allowed to see it, not to do this.
 *
 * More callers that must get 401 everywhere (idle sessions, disabled people,
 * revoked or forged keys, malformed tokens), another person's factor by every
 * identifier form, and oversized or malformed requests on every documented
 * route: tests/security/access-edge-cases.spec.ts.
 */

interface Request {
  readonly path: string;
  readonly query?: Record<string, string>;
  readonly body?: unknown;
  readonly csv?: string;
  readonly ifMatch?: string;
}
type Build = (w: World) => Request | Promise<Request>;
interface Row {
  readonly route: string;
  readonly expected: Readonly<Record<Caller, number>>;
  readonly build: Build;
  readonly note: string;
  /** The call ends the caller's sessions: each person cell gets a new person with the same roles. */
  readonly freshCaller: boolean;
}

function r(statuses: string, route: string, build: Build, options: { note?: string; freshCaller?: boolean } = {}): Row {
  const codes = statuses.trim().split(/\s+/).map(Number);
  if (codes.length !== CALLERS.length) throw new Error(`${route}: ${codes.length} statuses for ${CALLERS.length} callers`);
  const expected = Object.fromEntries(CALLERS.map((c, i) => [c, codes[i]])) as Record<Caller, number>;
  return { route, expected, build, note: options.note ?? '', freshCaller: options.freshCaller ?? false };
}

const at =
  (path: (w: World) => string, query?: (w: World) => Record<string, string>): Build =>
  (w) => ({
    path: path(w),
    ...(query ? { query: query(w) } : {}),
  });
const post =
  (path: (w: World) => string, body: (w: World) => unknown = () => ({})): Build =>
  (w) => ({ path: path(w), body: body(w) });
const calc =
  (name: string, body: unknown): Build =>
  () => ({ path: `/v1/calculations/${name}`, body });

/** Inventory: the four resources share their rules, so their rows are made alike. */
const INVENTORY = {
  vessels: {
    item: (w: World) => w.items.vessel.id,
    fresh: async (w: World) => (await seedVessel(w.prisma, w.labA)).id,
    body: () => ({
      assetTag: fresh('PIP-25-M'),
      kind: 'one-mark-pipette',
      nominalVolumeMl: '25',
      accuracyClass: 'A',
      material: 'borosilicate-3-3',
    }),
  },
  balances: {
    item: (w: World) => w.items.balance.id,
    fresh: async (w: World) => (await seedBalance(w.prisma, w.labA)).id,
    body: () => ({ assetTag: fresh('BAL-M'), capacityG: '220', readabilityG: '0.0001' }),
  },
  'reference-weights': {
    item: (w: World) => w.items.weight.id,
    fresh: async (w: World) => (await seedReferenceWeight(w.prisma, w.labA)).id,
    body: () => ({ assetTag: fresh('CW-F1-M'), nominalMassG: '100', oimlClass: 'F1' }),
  },
  instruments: {
    item: (w: World) => w.items.instrument.id,
    fresh: async (w: World) => (await seedInstrument(w.prisma, w.labA)).id,
    body: () => ({ assetTag: fresh('TH-M'), kind: 'thermometer' }),
  },
} as const;

const inventoryRows = (Object.keys(INVENTORY) as (keyof typeof INVENTORY)[]).flatMap((name) => {
  const res = INVENTORY[name];
  const patch =
    (body: unknown): Build =>
    async (w) => ({ path: `/v1/${name}/${await res.fresh(w)}`, ifMatch: '"v1"', body });
  // prettier-ignore
  return [
    r('401 201 403 201 403 404 403 403 403 403 403 403 401 401', `POST /v1/${name}`, post(() => `/v1/${name}`, (w) => ({ labId: w.labA, ...res.body() }))),
    r('401 200 200 200 200 200 403 403 403 403 200 200 401 401', `GET /v1/${name}`, at(() => `/v1/${name}`)),
    r('401 200 200 200 200 404 403 403 403 403 200 404 401 401', `GET /v1/${name}/:id`, at((w) => `/v1/${name}/${res.item(w)}`)),
    r('401 200 403 200 200 404 403 403 403 403 403 403 401 401', `PATCH /v1/${name}/:id`, patch({ location: 'Bench 4' }), { note: 'location: analysts too' }),
    r('401 200 403 200 403 404 403 403 403 403 403 403 401 401', `PATCH /v1/${name}/:id`, patch({ status: 'quarantined', reason: 'Dropped' }), { note: 'status: managers only' }),
  ];
});

const calibrationAct =
  (action: string, made: 'draft' | 'submitted', body: unknown): Build =>
  async (w) => {
    const id = made === 'draft' ? await w.draftCalibration() : await w.submittedCalibration();
    return { path: `/v1/calibrations/${id}/${action}`, ifMatch: made === 'draft' ? '"v1"' : '"v2"', body };
  };
const factorQuery = (whose: 'factor' | 'colleagueFactor') => (w: World) => ({
  personId: w.items[whose].personId,
  vesselId: w.items.factorVessel.id,
});

/** Due dates: a fresh scope per policy (the lab has one policy per vessel kind and class), notices and feeds of lab A. */
const POLICY_SCOPES = VESSEL_KINDS.flatMap((vesselKind) => ACCURACY_CLASSES.map((accuracyClass) => ({ vesselKind, accuracyClass })));
let policyScopes = 0;
const policyScope = () => POLICY_SCOPES[policyScopes++ % POLICY_SCOPES.length] as (typeof POLICY_SCOPES)[number];
const policyBody = (w: World) => ({
  labId: w.labA,
  subjectKind: 'vessel',
  ...policyScope(),
  intervalDays: 365,
  dueSoonDays: 30,
  reason: 'Matrix policy',
});
const seedPolicy = async (w: World) =>
  (
    await w.prisma.duePolicy.create({
      data: { labId: w.labA, subjectKind: 'vessel', ...policyScope(), intervalDays: 365, dueSoonDays: 30 },
    })
  ).id;
let sharedPolicy: Promise<string> | null = null;
/** One policy of lab A that reads look at (each write gets its own). */
const readPolicy = (w: World) => (sharedPolicy ??= seedPolicy(w));
/** A notice about an item of lab A, addressed to lab A's manager. */
async function seedNotice(w: World): Promise<string> {
  const weight = await seedReferenceWeight(w.prisma, w.labA);
  const notice = await w.prisma.notice.create({
    data: {
      labId: w.labA,
      eventKind: 'overdue',
      subjectKind: 'reference-weight',
      subjectId: weight.id,
      subjectLabel: weight.assetTag,
      dueOn: new Date('2026-11-20T00:00:00Z'),
    },
  });
  await w.prisma.noticeRecipient.create({ data: { noticeId: notice.id, personId: w.people.manager.id } });
  return notice.id;
}
async function seedFeed(w: World): Promise<{ id: string; token: string }> {
  const token = `rcal_${randomBytes(32).toString('base64url')}`;
  const feed = await w.prisma.calendarFeed.create({
    data: { labId: w.labA, name: 'Matrix feed', tokenHash: sha256(token), createdById: w.people.manager.id },
  });
  return { id: feed.id, token };
}

/** A completed export of lab A, straight into the database. */
async function seedExport(w: World): Promise<string> {
  return (await seedCompletedExport(w.prisma, w.people.admin.id, w.labA)).id;
}

// prettier-ignore
const TABLE: readonly Row[] = [
  //  anon adm aud mgA anA mgB otp f:r c:w c:r i:r crB exp rev
  r('200 200 200 200 200 200 200 200 200 200 200 200 200 200', 'GET /health/live', at(() => '/health/live')),
  r('200 200 200 200 200 200 200 200 200 200 200 200 200 200', 'GET /health/ready', at(() => '/health/ready')),
  r('200 200 200 200 200 200 200 200 200 200 200 200 200 200', 'GET /metrics', at(() => '/metrics')),
  r('200 200 200 200 200 200 200 200 200 200 200 200 200 200', 'GET /problems', at(() => '/problems')),
  r('200 200 200 200 200 200 200 200 200 200 200 200 200 200', 'GET /problems/:code', at(() => '/problems/not-found')),
  r('200 200 200 200 200 200 200 200 200 200 200 200 200 200', 'GET /openapi.json', at(() => '/openapi.json')),
  r('200 200 200 200 200 200 200 200 200 200 200 200 200 200', 'GET /openapi.yaml', at(() => '/openapi.yaml')),
  r('201 201 201 201 201 201 201 201 201 201 201 201 201 201', 'POST /v1/sessions', async (w) => ({ path: '/v1/sessions', body: { email: await w.signInEmail(), password: PASSWORD } })),
  r('401 204 204 204 204 204 204 403 403 403 403 403 401 401', 'DELETE /v1/sessions/current', at(() => '/v1/sessions/current'), { freshCaller: true }),
  r('401 200 200 200 200 200 200 403 403 403 403 403 401 401', 'GET /v1/me', at(() => '/v1/me')),
  r('401 204 204 204 204 204 204 403 403 403 403 403 401 401', 'POST /v1/me/password', post(() => '/v1/me/password', () => ({ currentPassword: PASSWORD, newPassword: NEW_PASSWORD })), { freshCaller: true }),

  r('401 201 403 403 403 403 403 403 403 403 403 403 401 401', 'POST /v1/people', post(() => '/v1/people', () => ({ email: `${fresh('p-').toLowerCase()}@waterworks.example`, displayName: 'New Analyst' }))),
  r('401 200 200 200 200 200 403 403 403 403 403 403 401 401', 'GET /v1/people', at(() => '/v1/people')),
  r('401 200 200 200 404 404 403 403 403 403 403 403 401 401', 'GET /v1/people/:personId', at((w) => `/v1/people/${w.people.colleague.id}`), { note: 'another analyst of lab A' }),
  r('401 200 403 403 404 404 403 403 403 403 403 403 401 401', 'PATCH /v1/people/:personId', async (w) => ({
    path: `/v1/people/${(await seedPerson(w.prisma, { labs: [{ labId: w.labA, role: 'analyst' }] })).id}`, ifMatch: '"v1"', body: { displayName: 'Renamed Analyst' } })),

  r('401 201 403 403 403 403 403 403 403 403 403 403 401 401', 'POST /v1/labs', post(() => '/v1/labs', () => ({ code: fresh('M-'), name: 'Teaching laboratory', timeZone: 'UTC' }))),
  r('401 200 200 200 200 200 403 403 403 403 200 200 401 401', 'GET /v1/labs', at(() => '/v1/labs')),
  r('401 200 200 200 200 404 403 403 403 403 200 404 401 401', 'GET /v1/labs/:labId', at((w) => `/v1/labs/${w.labA}`)),
  r('401 200 403 403 403 404 403 403 403 403 403 403 401 401', 'PATCH /v1/labs/:labId', async (w) => ({
    path: `/v1/labs/${w.labA}`, ifMatch: `"v${(await w.prisma.lab.findUniqueOrThrow({ where: { id: w.labA } })).version}"`, body: { name: 'Drinking-water chemistry' } }), { note: 'same name, current version' }),
  r('401 200 200 200 403 404 403 403 403 403 403 403 401 401', 'GET /v1/labs/:labId/members', at((w) => `/v1/labs/${w.labA}/members`)),
  r('401 200 403 200 403 404 403 403 403 403 403 403 401 401', 'PUT /v1/labs/:labId/members/:personId', async (w) => ({
    path: `/v1/labs/${w.labA}/members/${(await seedPerson(w.prisma)).id}`, body: { role: 'analyst' } })),
  r('401 204 403 204 403 404 403 403 403 403 403 403 401 401', 'DELETE /v1/labs/:labId/members/:personId', async (w) => ({
    path: `/v1/labs/${w.labA}/members/${(await seedPerson(w.prisma, { labs: [{ labId: w.labA, role: 'analyst' }] })).id}` })),

  r('401 201 403 403 403 403 403 403 403 403 403 403 401 401', 'POST /v1/service-credentials', post(() => '/v1/service-credentials', () => ({ name: 'Notebook system', scopes: ['inventory:read'], labIds: 'all' }))),
  r('401 200 200 403 403 403 403 403 403 403 403 403 401 401', 'GET /v1/service-credentials', at(() => '/v1/service-credentials')),
  r('401 200 200 403 403 403 403 403 403 403 403 403 401 401', 'GET /v1/service-credentials/:credentialId', at((w) => `/v1/service-credentials/${w.items.credential.id}`)),
  r('401 201 403 403 403 403 403 403 403 403 403 403 401 401', 'POST /v1/service-credentials/:credentialId/rotate', async (w) => ({
    path: `/v1/service-credentials/${(await seedCredential(w.prisma, w.people.admin.id, ['inventory:read'])).credential.id}/rotate` })),
  r('401 200 403 403 403 403 403 403 403 403 403 403 401 401', 'POST /v1/service-credentials/:credentialId/revoke', async (w) => ({
    path: `/v1/service-credentials/${(await seedCredential(w.prisma, w.people.admin.id, ['inventory:read'])).credential.id}/revoke` })),

  r('401 200 200 200 200 200 403 403 403 200 403 200 401 401', 'POST /v1/calculations/water-density', calc('water-density', EXAMPLES.waterDensity.demo.value)),
  r('401 200 200 200 200 200 403 403 403 200 403 200 401 401', 'POST /v1/calculations/air-density', calc('air-density', EXAMPLES.airDensity.demo.value)),
  r('401 200 200 200 200 200 403 403 403 200 403 200 401 401', 'POST /v1/calculations/z-factor', calc('z-factor', EXAMPLES.zFactor.demo.value)),
  r('401 200 200 200 200 200 403 403 403 200 403 200 401 401', 'POST /v1/calculations/gravimetric-volume', calc('gravimetric-volume', EXAMPLES.gravimetricVolume.pipette.value)),
  r('401 200 200 200 200 200 403 403 403 200 403 200 401 401', 'POST /v1/calculations/buoyancy', calc('buoyancy', EXAMPLES.buoyancy.demo.value)),
  r('401 200 200 200 200 200 403 403 403 200 403 200 401 401', 'POST /v1/calculations/conventional-mass', calc('conventional-mass', EXAMPLES.conventionalMass.demo.value)),
  r('401 200 200 200 200 200 403 403 403 200 403 200 401 401', 'POST /v1/calculations/balance-check', calc('balance-check', EXAMPLES.balanceCheck.demo.value)),
  r('401 200 200 200 200 200 403 403 403 200 200 200 401 401', 'GET /v1/reference/tolerances', at(() => '/v1/reference/tolerances')),
  r('401 200 200 200 200 200 403 403 403 200 200 200 401 401', 'GET /v1/reference/materials', at(() => '/v1/reference/materials')),

  r('401 200 200 200 403 200 403 403 403 403 403 403 401 401', 'GET /v1/audit-trail', at(() => '/v1/audit-trail')),
  r('401 200 200 200 403 404 403 403 403 403 403 403 401 401', 'GET /v1/audit-trail', at(() => '/v1/audit-trail', (w) => ({ labId: w.labA })), { note: '?labId=lab A' }),
  r('401 200 200 403 403 403 403 403 403 403 403 403 401 401', 'GET /v1/audit-trail/verification', at(() => '/v1/audit-trail/verification')),

  ...inventoryRows,
  r('401 201 403 201 403 404 403 403 403 403 403 403 401 401', 'POST /v1/vessels/import', (w) => ({
    path: '/v1/vessels/import', query: { labId: w.labA }, csv: `assetTag,kind,nominalVolumeMl,accuracyClass,material\r\n${fresh('VF-100-M')},volumetric-flask,100,A,borosilicate-3-3\r\n` })),

  r('401 403 403 201 201 404 403 403 403 403 403 403 401 401', 'POST /v1/calibrations', async (w) => ({
    path: '/v1/calibrations', body: w.calibrationBody({ vesselId: (await seedVessel(w.prisma, w.labA)).id }) }), { note: 'as its performer' }),
  r('401 201 403 201 201 404 403 403 403 403 403 403 401 401', 'POST /v1/calibrations', async (w) => ({
    path: '/v1/calibrations', body: w.calibrationBody({ vesselId: (await seedVessel(w.prisma, w.labA)).id, performerId: w.people.analyst.id }) }), { note: 'for the lab’s analyst' }),
  r('401 200 200 200 200 200 403 403 403 403 403 403 401 401', 'GET /v1/calibrations', at(() => '/v1/calibrations')),
  r('401 200 200 200 200 404 403 403 403 403 403 403 401 401', 'GET /v1/calibrations/:id', at((w) => `/v1/calibrations/${w.items.calibration}`)),
  r('401 403 403 403 200 404 403 403 403 403 403 403 401 401', 'PATCH /v1/calibrations/:id', async (w) => ({
    path: `/v1/calibrations/${await w.draftCalibration()}`, ifMatch: '"v1"', body: { notes: 'Tip rinsed twice' } }), { note: 'the analyst’s draft' }),
  r('401 403 403 403 200 404 403 403 403 403 403 403 401 401', 'POST /v1/calibrations/:id/submit', calibrationAct('submit', 'draft', {})),
  r('401 200 403 200 403 404 403 403 403 403 403 403 401 401', 'POST /v1/calibrations/:id/approve', calibrationAct('approve', 'submitted', {})),
  r('401 200 403 200 403 404 403 403 403 403 403 403 401 401', 'POST /v1/calibrations/:id/return', calibrationAct('return', 'submitted', { note: 'Check replicate 2' })),
  r('401 200 403 200 403 404 403 403 403 403 403 403 401 401', 'POST /v1/calibrations/:id/void', calibrationAct('void', 'submitted', { reason: 'Entered twice' })),

  r('401 200 200 200 200 200 403 200 403 403 403 200 401 401', 'GET /v1/factors', at(() => '/v1/factors')),
  r('401 200 200 200 200 404 403 200 403 403 403 404 401 401', 'GET /v1/factors/current', at(() => '/v1/factors/current', factorQuery('factor')), { note: 'the analyst’s own' }),
  r('401 200 200 200 404 404 403 200 403 403 403 404 401 401', 'GET /v1/factors/current', at(() => '/v1/factors/current', factorQuery('colleagueFactor')), { note: 'a colleague’s' }),
  r('401 200 200 200 200 404 403 200 403 403 403 404 401 401', 'GET /v1/factors/:id', at((w) => `/v1/factors/${w.items.factor.id}`), { note: 'the analyst’s own' }),
  r('401 200 200 200 404 404 403 200 403 403 403 404 401 401', 'GET /v1/factors/:id', at((w) => `/v1/factors/${w.items.colleagueFactor.id}`), { note: 'a colleague’s' }),
  r('401 200 200 200 200 404 403 403 200 403 403 404 401 401', 'POST /v1/factors/corrections', post(() => '/v1/factors/corrections', (w) => ({ ...factorQuery('factor')(w), indicatedVolumeMl: '25' }))),

  r('401 201 403 201 201 404 403 403 403 403 403 403 401 401', 'POST /v1/balances/:balanceId/checks', async (w) => ({
    path: `/v1/balances/${(await seedBalance(w.prisma, w.labA)).id}/checks`, body: { kind: 'quick', referenceWeightId: w.items.checkWeight.id, readingsG: ['100.0001'], limitG: '0.0003' } })),
  r('401 200 200 200 200 404 403 403 403 403 200 404 401 401', 'GET /v1/balances/:balanceId/checks', at((w) => `/v1/balances/${w.items.checked.id}/checks`)),
  r('401 200 200 200 200 404 403 403 403 403 200 404 401 401', 'GET /v1/balances/:balanceId/checks/:checkId', at((w) => `/v1/balances/${w.items.checked.id}/checks/${w.items.check.id}`)),
  r('401 200 200 200 200 404 403 403 200 403 403 404 401 401', 'POST /v1/balances/:balanceId/weighing-corrections', post((w) => `/v1/balances/${w.items.balance.id}/weighing-corrections`, () => ({ readingG: '24.9562', objectDensityKgPerM3: '997.9', airDensityKgPerM3: '1.166' }))),
  r('401 200 403 200 403 404 403 403 403 403 403 403 401 401', 'POST /v1/instruments/:instrumentId/out-of-tolerance', async (w) => ({
    path: `/v1/instruments/${(await seedInstrument(w.prisma, w.labA)).id}/out-of-tolerance`, body: { foundAt: new Date(Date.now() - 60_000).toISOString(), reason: 'Reads 0.4 K high at 20 °C' } })),

  r('401 201 403 201 403 404 403 403 403 403 403 403 401 401', 'POST /v1/labs/:labId/webhooks', post((w) => `/v1/labs/${w.labA}/webhooks`, () => ({ url: 'https://samples.waterworks.example/hooks/registry', eventKinds: ['due-soon'] }))),
  r('401 200 200 200 403 404 403 403 403 403 403 403 401 401', 'GET /v1/labs/:labId/webhooks', at((w) => `/v1/labs/${w.labA}/webhooks`)),
  r('401 200 200 200 403 404 403 403 403 403 403 403 401 401', 'GET /v1/labs/:labId/webhooks/:webhookId', async (w) => ({
    path: `/v1/labs/${w.labA}/webhooks/${(await seedWebhook(w.prisma, w.labA, w.people.admin.id)).id}` })),
  r('401 200 403 200 403 404 403 403 403 403 403 403 401 401', 'PATCH /v1/labs/:labId/webhooks/:webhookId', async (w) => ({
    path: `/v1/labs/${w.labA}/webhooks/${(await seedWebhook(w.prisma, w.labA, w.people.admin.id)).id}`, ifMatch: '"v1"', body: { enabled: false } })),
  r('401 200 403 200 403 404 403 403 403 403 403 403 401 401', 'POST /v1/labs/:labId/webhooks/:webhookId/rotate-secret', async (w) => ({
    path: `/v1/labs/${w.labA}/webhooks/${(await seedWebhook(w.prisma, w.labA, w.people.admin.id)).id}/rotate-secret` })),
  r('401 200 200 200 403 404 403 403 403 403 403 403 401 401', 'GET /v1/labs/:labId/deliveries', at((w) => `/v1/labs/${w.labA}/deliveries`)),
  r('401 200 403 200 403 404 403 403 403 403 403 403 401 401', 'POST /v1/labs/:labId/deliveries/:deliveryId/redeliver', async (w) => ({
    path: `/v1/labs/${w.labA}/deliveries/${(await seedFailedDelivery(w.prisma, w.labA, w.people.admin.id)).id}/redeliver` })),
  r('401 200 200 200 200 200 403 403 403 403 200 200 401 401', 'GET /v1/due', at(() => '/v1/due')),
  r('401 200 200 200 200 404 403 403 403 403 200 404 401 401', 'GET /v1/due', at(() => '/v1/due', (w) => ({ labId: w.labA })), { note: '?labId=lab A' }),
  r('401 201 403 201 403 404 403 403 403 403 403 403 401 401', 'POST /v1/due-policies', post(() => '/v1/due-policies', policyBody)),
  r('401 200 200 200 200 200 403 403 403 403 403 403 401 401', 'GET /v1/due-policies', at(() => '/v1/due-policies')),
  r('401 200 200 200 200 404 403 403 403 403 403 403 401 401', 'GET /v1/due-policies/:policyId', async (w) => ({ path: `/v1/due-policies/${await readPolicy(w)}` })),
  r('401 200 403 200 403 404 403 403 403 403 403 403 401 401', 'PATCH /v1/due-policies/:policyId', async (w) => ({
    path: `/v1/due-policies/${await seedPolicy(w)}`, ifMatch: '"v1"', body: { dueSoonDays: 21, reason: 'Three weeks of notice' } })),
  r('401 200 200 200 200 200 403 403 403 403 403 403 401 401', 'GET /v1/interval-changes', at(() => '/v1/interval-changes')),
  r('401 200 200 200 200 200 403 403 403 403 403 403 401 401', 'GET /v1/notices', at(() => '/v1/notices')),
  r('401 200 403 200 404 404 403 403 403 403 403 403 401 401', 'POST /v1/notices/:noticeId/acknowledge', async (w) => ({ path: `/v1/notices/${await seedNotice(w)}/acknowledge` }), { note: 'addressed to lab A’s manager' }),
  r('401 201 403 201 403 404 403 403 403 403 403 403 401 401', 'POST /v1/labs/:labId/calendar-feeds', post((w) => `/v1/labs/${w.labA}/calendar-feeds`, () => ({ name: 'DW-CHEM shared calendar' }))),
  r('401 200 200 200 403 404 403 403 403 403 403 403 401 401', 'GET /v1/labs/:labId/calendar-feeds', at((w) => `/v1/labs/${w.labA}/calendar-feeds`)),
  r('401 200 403 200 403 404 403 403 403 403 403 403 401 401', 'POST /v1/labs/:labId/calendar-feeds/:feedId/revoke', async (w) => ({ path: `/v1/labs/${w.labA}/calendar-feeds/${(await seedFeed(w)).id}/revoke` })),
  r('200 200 200 200 200 200 200 200 200 200 200 200 200 200', 'GET /v1/calendar-feed.ics', async (w) => ({ path: '/v1/calendar-feed.ics', query: { token: (await seedFeed(w)).token } }), { note: 'a live token; no sign-in' }),

  r('401 200 200 200 403 404 403 403 403 403 403 403 401 401', 'POST /v1/exports', post(() => '/v1/exports', (w) => ({ report: 'inventory-register', format: 'csv', labIds: [w.labA], from: '2026-01-01T00:00:00Z', to: '2027-01-01T00:00:00Z' })), { note: 'lab A' }),
  r('401 200 200 200 403 200 403 403 403 403 403 403 401 401', 'GET /v1/exports', at(() => '/v1/exports')),
  r('401 200 200 200 403 404 403 403 403 403 403 403 401 401', 'GET /v1/exports/:exportId', async (w) => ({ path: `/v1/exports/${await seedExport(w)}` }), { note: 'an export of lab A' }),
  r('401 200 200 200 403 200 403 403 403 403 403 403 401 401', 'POST /v1/exports/verification', post(() => '/v1/exports/verification', () => ({ sha256: randomBytes(32).toString('hex') }))),
  r('401 200 200 200 403 200 403 403 403 403 403 403 401 401', 'POST /v1/exports/verification/file', () => ({ path: '/v1/exports/verification/file', csv: 'lab,asset_tag\r\nDW-CHEM,PIP-25-001\r\n' })),
];

/** Routes that are not the API's own: the interactive docs' static files. */
const isDocsAsset = (route: string) => /^[A-Z]+ \/docs(\/|$)/.test(route);
const PROBLEM = /^application\/problem\+json/;
const BATCH = 14;
const OUTSIDERS: readonly Caller[] = ['otherManager', 'otherLabCredential'];

describe('authorization matrix', () => {
  let w: World;
  let appRoutes: ReadonlySet<string> = new Set();

  beforeAll(async () => {
    const started = await withRegisteredRoutes(() => startTestApp({ WEBHOOK_SECRET_KEY: TEST_WEBHOOK_KEY }));
    appRoutes = started.routes;
    w = await buildWorld(started.result);
  }, 60_000);
  afterAll(() => w.t.close());

  it('lists every route of the application, and only those', () => {
    const api = [...appRoutes].filter((route) => !isDocsAsset(route));
    const listed = new Set(TABLE.map((row) => row.route));
    expect({ missingFromTable: api.filter((route) => !listed.has(route)).sort() }).toEqual({ missingFromTable: [] });
    expect({ notInApp: [...listed].filter((route) => !appRoutes.has(route)).sort() }).toEqual({ notInApp: [] });
    expect(api.length).toBeGreaterThan(60);
  });

  it.each(TABLE.map((row) => [`${row.route}${row.note ? ` (${row.note})` : ''}`, row] as const))('%s', async (_name, row) => {
    const observed = {} as Record<Caller, number>;
    const troubles: string[] = [];
    // Cells are independent (fresh objects, fresh callers where needed): a few at a time.
    for (let i = 0; i < CALLERS.length; i += BATCH) {
      await Promise.all(
        CALLERS.slice(i, i + BATCH).map(async (caller) => {
          const res = await callCell(w, row, caller);
          observed[caller] = res.status;
          const say = (what: string) => troubles.push(`${caller}: ${res.status} ${what}`);
          if (res.status < 400) {
            // Lists and lookups answered to those who cannot read lab A never name it.
            if (OUTSIDERS.includes(caller) && (res.text ?? '').includes(w.labA)) say('names lab A to a caller who cannot read it');
            return;
          }
          if (!PROBLEM.test(String(res.headers['content-type']))) say('is not a problem document');
          if (res.body?.code === 'route-not-found') say(`matched no route of ${row.route}`);
          const requestId = String(res.headers['x-request-id']);
          if ((await w.prisma.auditEntry.count({ where: { requestId } })) > 0) say('was refused, yet audited a change');
          if (res.status !== row.expected[caller]) say(`${res.body?.code}: ${res.body?.detail} ${JSON.stringify(res.body?.errors ?? [])}`);
        }),
      );
    }
    expect({ statuses: observed, troubles: troubles.sort() }).toEqual({ statuses: row.expected, troubles: [] });
  });
});

/** One cell: the row's request, built fresh, sent with the caller's token. */
async function callCell(w: World, row: Row, caller: Caller) {
  const [method] = row.route.split(' ') as [string];
  const [token, req] = await Promise.all([w.tokenFor(caller, row.freshCaller), row.build(w)]);
  let call = w.t.http[method.toLowerCase() as 'get'](req.path);
  if (token) call = call.set(bearer(token));
  if (req.query) call = call.query(req.query);
  if (req.ifMatch) call = call.set('if-match', req.ifMatch);
  if (req.csv !== undefined) return call.set('content-type', 'text/csv').send(req.csv);
  return req.body === undefined ? call : call.send(req.body as object);
}
