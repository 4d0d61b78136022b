import { randomBytes } from 'node:crypto';

import type { PrismaClient } from '@registry/data';

import type { LabRole, RegistryRole, Scope } from '../../apps/api/src/auth/actor';
import { newCredentialKey, newSessionToken } from '../../apps/api/src/auth/tokens';

/**
 * Test data straight into the database (fast: no password hashing). Names and
 * values follow the demo scenario: a municipal water authority's labs.
 */
const unique = () => randomBytes(3).toString('hex').toUpperCase();

export async function seedLab(prisma: PrismaClient, overrides: { code?: string; name?: string; timeZone?: string } = {}) {
  return prisma.lab.create({
    data: {
      code: overrides.code ?? `LAB-${unique()}`,
      name: overrides.name ?? 'Drinking-water chemistry',
      timeZone: overrides.timeZone ?? 'Europe/Vienna',
    },
  });
}

export interface SeedPerson {
  email?: string;
  displayName?: string;
  registryRole?: RegistryRole | null;
  labs?: { labId: string; role: LabRole; externalRef?: string }[];
  status?: 'active' | 'disabled';
}

export async function seedPerson(prisma: PrismaClient, p: SeedPerson = {}) {
  const person = await prisma.person.create({
    data: {
      email: p.email ?? `analyst-${unique().toLowerCase()}@waterworks.example`,
      displayName: p.displayName ?? 'Test Analyst',
      registryRole: p.registryRole ?? null,
      status: p.status ?? 'active',
    },
  });
  for (const m of p.labs ?? []) {
    await prisma.labMembership.create({
      data: { labId: m.labId, personId: person.id, labRole: m.role, externalRef: m.externalRef ?? null },
    });
  }
  return person;
}

/** A live session for the person; returns the bearer token. */
export async function sessionFor(prisma: PrismaClient, personId: string, now: Date = new Date()): Promise<string> {
  const { token, hash } = newSessionToken();
  await prisma.session.create({
    data: { personId, tokenHash: hash, createdAt: now, lastSeenAt: now, expiresAt: new Date(now.getTime() + 12 * 3_600_000) },
  });
  return token;
}

/** A service credential; returns the full key to send as a bearer token. */
export async function seedCredential(prisma: PrismaClient, createdBy: string, scopes: Scope[], labIds: string[] | 'all' = 'all') {
  const { key, keyId, secretHash } = newCredentialKey();
  const credential = await prisma.serviceCredential.create({
    data: {
      name: `integration-${keyId.slice(0, 4)}`,
      keyId,
      secretHash,
      scopes,
      allLabs: labIds === 'all',
      labIds: labIds === 'all' ? [] : labIds,
      createdBy,
    },
  });
  return { key, credential };
}

/** One lab with an administrator, an auditor, a manager, an analyst; plus a second lab with its own manager. */
export async function seedCast(prisma: PrismaClient) {
  const lab = await seedLab(prisma, { name: 'Drinking-water chemistry' });
  const otherLab = await seedLab(prisma, { name: 'Wastewater laboratory' });
  const admin = await seedPerson(prisma, { displayName: 'Registry Admin', registryRole: 'administrator' });
  const auditor = await seedPerson(prisma, { displayName: 'External Auditor', registryRole: 'auditor' });
  const manager = await seedPerson(prisma, { displayName: 'Lab Manager', labs: [{ labId: lab.id, role: 'manager' }] });
  const analyst = await seedPerson(prisma, { displayName: 'Bench Analyst', labs: [{ labId: lab.id, role: 'analyst' }] });
  const otherManager = await seedPerson(prisma, { displayName: 'Other Manager', labs: [{ labId: otherLab.id, role: 'manager' }] });
  const tokens = {
    admin: await sessionFor(prisma, admin.id),
    auditor: await sessionFor(prisma, auditor.id),
    manager: await sessionFor(prisma, manager.id),
    analyst: await sessionFor(prisma, analyst.id),
    otherManager: await sessionFor(prisma, otherManager.id),
  };
  return { lab, otherLab, people: { admin, auditor, manager, analyst, otherManager }, tokens };
}

export const bearer = (token: string) => ({ authorization: `Bearer ${token}` });

/** A person who signs in with `password` (hashed with the service's own argon2id parameters). */
export async function seedPersonWithPassword(prisma: PrismaClient, password: string, p: SeedPerson = {}) {
  const { hashPassword } = await import('../../apps/api/src/sessions/password-hashing');
  const person = await seedPerson(prisma, p);
  return prisma.person.update({
    where: { id: person.id },
    data: { passwordHash: await hashPassword(password), passwordSetAt: new Date() },
  });
}

/** Everything the audit trail holds, plus the captured logs, as one text to search for secrets. */
export async function auditAndLogText(prisma: PrismaClient, logs: readonly unknown[]): Promise<string> {
  const entries = await prisma.auditEntry.findMany();
  return JSON.stringify([entries, logs], (_key, value: unknown) => (typeof value === 'bigint' ? value.toString() : value));
}

type DataModels = import('@registry/data').Prisma.TypeMap['model'];
type CreateInput<M extends keyof DataModels> = DataModels[M]['operations']['create']['args']['data'];

/** A class A 25 mL one-mark pipette (demo tags PIP-25-nnn) straight into the database. */
export async function seedVessel(prisma: PrismaClient, labId: string, overrides: Partial<CreateInput<'Vessel'>> = {}) {
  return prisma.vessel.create({
    data: {
      labId,
      assetTag: `PIP-25-${unique()}`,
      kind: 'one-mark-pipette',
      deliveryMode: 'deliver',
      nominalVolumeMl: '25',
      accuracyClass: 'A',
      classStandard: 'ISO 648:2008',
      material: 'borosilicate-3-3',
      expansionCoefficientPerK: '0.0000099',
      limitMl: '0.03',
      limitSource: 'class-table',
      ...overrides,
    } as CreateInput<'Vessel'>,
  });
}

/** An analytical balance, 220 g / 0.1 mg (demo tags BAL-nn). */
export async function seedBalance(prisma: PrismaClient, labId: string, overrides: Partial<CreateInput<'Balance'>> = {}) {
  return prisma.balance.create({
    data: { labId, assetTag: `BAL-${unique()}`, capacityG: '220', readabilityG: '0.0001', ...overrides } as CreateInput<'Balance'>,
  });
}

/** A class F1 100 g check weight. */
export async function seedReferenceWeight(prisma: PrismaClient, labId: string, overrides: Partial<CreateInput<'ReferenceWeight'>> = {}) {
  return prisma.referenceWeight.create({
    data: { labId, assetTag: `CW-F1-${unique()}`, nominalMassG: '100', oimlClass: 'F1', ...overrides } as CreateInput<'ReferenceWeight'>,
  });
}

/** A thermometer. */
export async function seedInstrument(prisma: PrismaClient, labId: string, overrides: Partial<CreateInput<'Instrument'>> = {}) {
  return prisma.instrument.create({
    data: { labId, assetTag: `TH-${unique()}`, kind: 'thermometer', ...overrides } as CreateInput<'Instrument'>,
  });
}

export interface SeedFactor {
  readonly labId: string;
  readonly personId: string;
  readonly vesselId: string;
  readonly kind?: 'single' | 'curve';
  readonly factor?: string;
  readonly correctionMl?: string | null;
  /** Curve points, ascending: { nominalVolumeMl, meanVolumeMl, correctionMl, expandedUncertaintyMl } as decimal strings. */
  readonly curve?: readonly Record<'nominalVolumeMl' | 'meanVolumeMl' | 'correctionMl' | 'expandedUncertaintyMl', string>[];
  readonly expandedUncertaintyMl?: string;
  readonly coverageFactor?: string;
  readonly validFrom?: Date;
  readonly validUntil?: Date;
  readonly state?: 'current' | 'superseded' | 'withdrawn';
  readonly endedAt?: Date | null;
  readonly createdAt?: Date;
  readonly reviewRequiredAt?: Date | null;
  readonly reviewReason?: string | null;
}

/**
 * A personal factor with the approved calibration it must come from (composite key:
 * same performer and vessel), a balance and a thermometer. Defaults: a single factor
 * 0.9996 (25 mL → 24.99 mL), U = 0.012 mL, k = 2, valid for a year from 30 days ago.
 */
export async function seedFactor(prisma: PrismaClient, f: SeedFactor) {
  const validFrom = f.validFrom ?? new Date(Date.now() - 30 * 86_400_000);
  const balance = await seedBalance(prisma, f.labId);
  const thermometer = await seedInstrument(prisma, f.labId);
  const calibration = await prisma.calibration.create({
    data: {
      labId: f.labId,
      vesselId: f.vesselId,
      performerId: f.personId,
      enteredById: f.personId,
      balanceId: balance.id,
      thermometerId: thermometer.id,
      state: 'approved',
      performedAt: validFrom,
      deliveryMode: 'deliver',
      inputs: { points: [] },
      results: { points: [] },
      verdict: 'pass',
      libraryVersion: 'test',
      submittedAt: validFrom,
      reviewerId: f.personId,
      reviewedAt: validFrom,
    },
  });
  const curve = f.kind === 'curve';
  const state = f.state ?? 'current';
  return prisma.factor.create({
    data: {
      labId: f.labId,
      personId: f.personId,
      vesselId: f.vesselId,
      calibrationId: calibration.id,
      kind: f.kind ?? 'single',
      factor: f.factor ?? '0.9996',
      correctionMl: curve ? null : f.correctionMl === undefined ? '-0.01' : f.correctionMl,
      ...(curve ? { curve: f.curve as object[] } : {}),
      expandedUncertaintyMl: f.expandedUncertaintyMl ?? '0.012',
      coverageFactor: f.coverageFactor ?? '2',
      validFrom,
      validUntil: f.validUntil ?? new Date(validFrom.getTime() + 365 * 86_400_000),
      state,
      endedAt: state === 'current' ? null : (f.endedAt ?? new Date()),
      reviewRequiredAt: f.reviewRequiredAt ?? null,
      reviewReason: f.reviewReason ?? null,
      ...(f.createdAt ? { createdAt: f.createdAt } : {}),
    },
  });
}

/** A class E2 check weight with its certificate (demo tags CW-E2-nnn): 100 g, conventional mass 100.000045 g, U = 0.05 mg, due in a year. */
export async function seedCheckWeight(prisma: PrismaClient, labId: string, overrides: Partial<CreateInput<'ReferenceWeight'>> = {}) {
  return seedReferenceWeight(prisma, labId, {
    assetTag: `CW-E2-${unique()}`,
    oimlClass: 'E2',
    conventionalMassG: '100.000045',
    uncertaintyG: '0.00005',
    certificateNumber: 'MW-2026-0331',
    certificateDue: new Date(Date.now() + 365 * 86_400_000),
    ...overrides,
  });
}

export interface SeedCalibrationUsing {
  readonly labId: string;
  readonly vesselId: string;
  readonly performerId: string;
  readonly balanceId: string;
  readonly thermometerId: string;
  readonly performedAt: Date;
  readonly state?: 'draft' | 'submitted' | 'approved' | 'returned' | 'voided';
  /** Reviewer of an approved calibration, or who voided a voided one. */
  readonly reviewerId?: string;
}

/** A calibration row naming this balance and thermometer, in any state, straight into the database (inputs and results are placeholders). */
export async function seedCalibrationUsing(prisma: PrismaClient, c: SeedCalibrationUsing) {
  const state = c.state ?? 'approved';
  const frozen = state !== 'draft' && state !== 'returned';
  const reviewer = c.reviewerId ?? c.performerId;
  return prisma.calibration.create({
    data: {
      labId: c.labId,
      vesselId: c.vesselId,
      performerId: c.performerId,
      enteredById: c.performerId,
      balanceId: c.balanceId,
      thermometerId: c.thermometerId,
      state,
      performedAt: c.performedAt,
      deliveryMode: 'deliver',
      inputs: { points: [] },
      ...(frozen ? { results: { points: [] }, verdict: 'pass', libraryVersion: 'test', submittedAt: c.performedAt } : {}),
      ...(state === 'approved' ? { reviewerId: reviewer, reviewedAt: c.performedAt } : {}),
      ...(state === 'voided' ? { voidedById: reviewer, voidedAt: c.performedAt, voidReason: 'entered twice' } : {}),
    },
  });
}

/** The current single factor made from an approved calibration (its performer's, for its vessel). */
export async function seedFactorFrom(
  prisma: PrismaClient,
  calibration: { id: string; labId: string; performerId: string; vesselId: string; performedAt: Date },
  overrides: { reviewRequiredAt?: Date; reviewReason?: string } = {},
) {
  return prisma.factor.create({
    data: {
      labId: calibration.labId,
      personId: calibration.performerId,
      vesselId: calibration.vesselId,
      calibrationId: calibration.id,
      kind: 'single',
      factor: '0.9996',
      correctionMl: '-0.01',
      expandedUncertaintyMl: '0.012',
      coverageFactor: '2',
      validFrom: calibration.performedAt,
      validUntil: new Date(calibration.performedAt.getTime() + 365 * 86_400_000),
      reviewRequiredAt: overrides.reviewRequiredAt ?? null,
      reviewReason: overrides.reviewReason ?? null,
    },
  });
}

/** A routine check of a balance straight into the append-only balance_checks table; passing unless told otherwise. */
export async function seedBalanceCheck(
  prisma: PrismaClient,
  balance: { id: string; labId: string },
  performedById: string,
  performedAt: Date,
  options: { passed?: boolean; kind?: 'quick' | 'usp41' | 'eccentricity' } = {},
) {
  return prisma.balanceCheck.create({
    data: {
      labId: balance.labId,
      balanceId: balance.id,
      performedById,
      performedAt,
      kind: options.kind ?? 'quick',
      inputs: { readingsG: ['100.0001'] },
      results: { passed: options.passed ?? true },
      passed: options.passed ?? true,
      libraryVersion: 'test',
    },
  });
}

export const seedPassingBalanceCheck = (prisma: PrismaClient, balance: { id: string; labId: string }, by: string, at: Date) =>
  seedBalanceCheck(prisma, balance, by, at, { passed: true });

/**
 * A balance and a thermometer fit for a calibration performed shortly after `checkedAt`: in
 * service, calibrated until a year from now, and the balance checked (passing) at `checkedAt`.
 */
export async function seedTraceableInstruments(prisma: PrismaClient, labId: string, checkedById: string, checkedAt: Date) {
  const inAYear = new Date(Date.now() + 365 * 86_400_000);
  const balance = await seedBalance(prisma, labId, {
    externalCalibrationDate: new Date(Date.now() - 30 * 86_400_000),
    externalCalibrationDue: inAYear,
    externalCalibrationCertificate: 'DAkkS-2026-0117',
  });
  const thermometer = await seedInstrument(prisma, labId, { calibrationDue: inAYear, temperatureUncertaintyK: '0.05' });
  await seedPassingBalanceCheck(prisma, balance, checkedById, checkedAt);
  return { balance, thermometer };
}

/** A class A 50 mL burette (ISO 385, ±0.05 mL at any point of the scale; demo tags BUR-50-nnn). */
export async function seedBurette(prisma: PrismaClient, labId: string, overrides: Partial<CreateInput<'Vessel'>> = {}) {
  return seedVessel(prisma, labId, {
    assetTag: `BUR-50-${unique()}`,
    kind: 'burette',
    nominalVolumeMl: '50',
    graduationIntervalMl: '0.1',
    classStandard: 'ISO 385:2005',
    limitMl: '0.05',
    ...overrides,
  });
}

/** A completed calibration-log export of one lab (30 June 2026), straight into the database. */
export async function seedCompletedExport(prisma: PrismaClient, requestedById: string, labId: string) {
  const at = new Date('2026-06-30T12:00:00Z');
  return prisma.export.create({
    data: {
      report: 'calibration-log',
      format: 'csv',
      requestedById,
      allLabs: false,
      labIds: [labId],
      periodFrom: new Date('2026-01-01T00:00:00Z'),
      periodTo: at,
      asOf: at,
      parameters: {},
      state: 'completed',
      startedAt: at,
      endedAt: at,
      rowCount: 0n,
      byteCount: 10n,
      sha256: new Uint8Array(randomBytes(32)),
    },
  });
}
