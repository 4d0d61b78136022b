import { randomBytes } from 'node:crypto';

import type { PrismaClient } from '@registry/data';
import type { Response } from 'supertest';

import type { LabRole, RegistryRole } from '../../apps/api/src/auth/actor';
import { newSessionToken } from '../../apps/api/src/auth/tokens';
import { hashPassword } from '../../apps/api/src/sessions/password-hashing';
import { calibrationWorld, pipetteRun } from '../calibrations/helpers';
import {
  bearer,
  seedBalance,
  seedCheckWeight,
  seedCredential,
  seedFactor,
  seedInstrument,
  seedPerson,
  seedReferenceWeight,
  seedVessel,
  sessionFor,
} from '../support/factories';
import type { TestApp } from '../support/test-app';

/*
 * The callers and the objects of the authorization matrix: lab A (with its
 * manager and analyst) holds every object a request points at; lab B has its
 * own manager. Objects a cell changes are made fresh for that cell.
 */

export const CALLERS = [
  'anonymous',
  'admin',
  'auditor',
  'manager',
  'analyst',
  'otherManager',
  'oneTimePassword',
  'factorsReader',
  'corrector',
  'calculator',
  'inventoryReader',
  'otherLabCredential',
  'expired',
  'revoked',
] as const;
export type Caller = (typeof CALLERS)[number];

/** The people among the callers, as a clone of each would be registered. */
type PersonCaller = 'admin' | 'auditor' | 'manager' | 'analyst' | 'otherManager' | 'oneTimePassword';
interface PersonSpec {
  readonly registryRole: RegistryRole | null;
  readonly labs: readonly { lab: 'A' | 'B'; role: LabRole }[];
  readonly mustChangePassword?: boolean;
}
const PEOPLE: Record<PersonCaller, PersonSpec> = {
  admin: { registryRole: 'administrator', labs: [] },
  auditor: { registryRole: 'auditor', labs: [] },
  manager: { registryRole: null, labs: [{ lab: 'A', role: 'manager' }] },
  analyst: { registryRole: null, labs: [{ lab: 'A', role: 'analyst' }] },
  otherManager: { registryRole: null, labs: [{ lab: 'B', role: 'manager' }] },
  // Still on the one-time password the registry printed: only the password change is open.
  oneTimePassword: { registryRole: 'administrator', labs: [], mustChangePassword: true },
};
const isPerson = (caller: Caller): caller is PersonCaller => caller in PEOPLE;

export const PASSWORD = 'burette meniscus at eye level';
export const NEW_PASSWORD = 'volumetric flask filled to the mark';
/** Replicate nets of a 25 mL pipette run (any verdict will do here). */
const NETS = ['24.9400', '24.9450', '24.9500'];

let counter = 0;
/** A value no other cell uses (asset tags, lab codes, emails). */
export const fresh = (prefix: string) =>
  `${prefix}${(++counter).toString(36).toUpperCase()}${randomBytes(2).toString('hex').toUpperCase()}`;

export async function buildWorld(t: TestApp) {
  const w = await calibrationWorld(t);
  const { prisma, cast } = w;
  const labA = cast.lab.id;
  const passwordHash = await hashPassword(PASSWORD);

  /** A person like `caller` (same roles), signed in with a session of their own. */
  async function personLike(caller: PersonCaller): Promise<{ id: string; token: string }> {
    const spec = PEOPLE[caller];
    const person = await seedPerson(prisma, {
      displayName: `Matrix ${caller}`,
      registryRole: spec.registryRole,
      labs: spec.labs.map((m) => ({ labId: m.lab === 'A' ? labA : cast.otherLab.id, role: m.role })),
    });
    await prisma.person.update({
      where: { id: person.id },
      data: { passwordHash, passwordSetAt: new Date(), mustChangePassword: spec.mustChangePassword ?? false },
    });
    return { id: person.id, token: await sessionFor(prisma, person.id) };
  }

  const key = async (scopes: Parameters<typeof seedCredential>[2], labs: string[] | 'all' = 'all') =>
    (await seedCredential(prisma, cast.people.admin.id, scopes, labs)).key;
  const revoked = await sessionFor(prisma, cast.people.admin.id);
  await t.http.delete('/v1/sessions/current').set(bearer(revoked)).expect(204);
  const tokens: Record<Exclude<Caller, 'anonymous'>, string> = {
    ...cast.tokens,
    oneTimePassword: (await personLike('oneTimePassword')).token,
    factorsReader: await key(['factors:read']),
    corrector: await key(['corrections:write']),
    calculator: await key(['calculations:run']),
    inventoryReader: await key(['inventory:read']),
    otherLabCredential: await key(['factors:read', 'corrections:write', 'calculations:run', 'inventory:read'], [cast.otherLab.id]),
    expired: await expiredSession(prisma, cast.people.admin.id),
    revoked,
  };

  const analyst = cast.people.analyst;
  const factorVessel = await seedVessel(prisma, labA);
  const colleague = await seedPerson(prisma, { displayName: 'Second Analyst', labs: [{ labId: labA, role: 'analyst' }] });

  // A check recorded through the API (the factories' placeholder checks have no results to show).
  const checkWeight = await seedCheckWeight(prisma, labA);
  const checked = await seedBalance(prisma, labA);

  /** An analyst's draft calibration of a pipette of its own, made through the API; returns its id. */
  async function draftCalibration(): Promise<string> {
    const vessel = await seedVessel(prisma, labA);
    const res = await t.http
      .post('/v1/calibrations')
      .set(bearer(cast.tokens.analyst))
      .send(pipetteRun(w, NETS, { vesselId: vessel.id }));
    return expectCreated(res).body.id;
  }

  return {
    t,
    prisma,
    labA,
    labB: cast.otherLab.id,
    people: { ...cast.people, colleague },
    items: {
      vessel: await seedVessel(prisma, labA),
      balance: w.balance,
      weight: await seedReferenceWeight(prisma, labA),
      checkWeight,
      instrument: await seedInstrument(prisma, labA),
      thermometer: w.thermometer,
      checked,
      check: expectCreated(
        await t.http
          .post(`/v1/balances/${checked.id}/checks`)
          .set(bearer(cast.tokens.manager))
          .send({ kind: 'quick', referenceWeightId: checkWeight.id, readingsG: ['100.0001'], limitG: '0.0003' }),
      ).body as { id: string },
      calibration: await draftCalibration(),
      factorVessel,
      factor: await seedFactor(prisma, { labId: labA, personId: analyst.id, vesselId: factorVessel.id }),
      colleagueFactor: await seedFactor(prisma, { labId: labA, personId: colleague.id, vesselId: factorVessel.id }),
      credential: (await seedCredential(prisma, cast.people.admin.id, ['inventory:read'])).credential,
    },
    calibrationBody: (extra: Record<string, unknown> = {}) => pipetteRun(w, NETS, extra),
    draftCalibration,
    /** The email of a new person who signs in with PASSWORD (one per cell: parallel attempts on one account are throttled). */
    async signInEmail(): Promise<string> {
      const email = `${fresh('sign-in-').toLowerCase()}@waterworks.example`;
      await prisma.person.create({ data: { email, displayName: 'Matrix Sign-in', passwordHash, passwordSetAt: new Date() } });
      return email;
    },
    /** A submitted calibration of the analyst; returns its id (its ETag is then "v2"). */
    async submittedCalibration(): Promise<string> {
      const id = await draftCalibration();
      const res = await t.http.post(`/v1/calibrations/${id}/submit`).set(bearer(cast.tokens.analyst)).set('if-match', '"v1"').send({});
      if (res.status !== 200) throw new Error(`setup: submit answered ${res.status} ${JSON.stringify(res.body)}`);
      return id;
    },
    /** The caller's bearer token; with `fresh`, a new person like the caller (for routes that end the caller's sessions). */
    async tokenFor(caller: Caller, freshCaller: boolean): Promise<string | null> {
      if (caller === 'anonymous') return null;
      if (freshCaller && isPerson(caller)) return (await personLike(caller)).token;
      return tokens[caller];
    },
  };
}
export type World = Awaited<ReturnType<typeof buildWorld>>;

/** A session of the person whose absolute lifetime ended a minute ago (it was in use until then). */
async function expiredSession(prisma: PrismaClient, personId: string): Promise<string> {
  const { token, hash } = newSessionToken();
  const now = Date.now();
  await prisma.session.create({
    data: {
      personId,
      tokenHash: hash,
      createdAt: new Date(now - 12 * 3_600_000),
      lastSeenAt: new Date(now - 120_000),
      expiresAt: new Date(now - 60_000),
    },
  });
  return token;
}

function expectCreated(res: Response): Response {
  if (res.status !== 201) throw new Error(`setup: answered ${res.status} ${JSON.stringify(res.body)}`);
  return res;
}
