import { createHash } from 'node:crypto';

import type { PrismaClient } from '@registry/data';
import type { Response } from 'supertest';

import { parseCsv } from '../../apps/api/src/inventory/csv';
import {
  bearer,
  seedBalance,
  seedBalanceCheck,
  seedCalibrationUsing,
  seedCast,
  seedCheckWeight,
  seedInstrument,
  seedVessel,
} from '../support/factories';
import type { TestApp } from '../support/test-app';

export type Cast = Awaited<ReturnType<typeof seedCast>>;

export const DAY = 86_400_000;
/** The reporting period of the scenario: the first half of 2026. */
export const PERIOD = { from: '2026-01-01T00:00:00.000Z', to: '2026-07-01T00:00:00.000Z' } as const;
export const at = (iso: string) => new Date(iso);

/**
 * The water authority's drinking-water lab (lab A) and wastewater lab (lab B):
 * lab A has two pipettes, a balance whose external calibration is overdue, a thermometer and a
 * check weight; four calibrations in the period (one under a traceability exception, one
 * voided), one before it, one draft; a superseded and a current factor of the analyst for the
 * first pipette; a USP <41> check with its minimum weight and a quick check. Lab B has one
 * calibration in the period.
 */
export async function seedScenario(prisma: PrismaClient) {
  const cast = await seedCast(prisma);
  const { lab, otherLab, people } = cast;
  const pipette = await seedVessel(prisma, lab.id, { assetTag: 'PIP-25-001' });
  const flask = await seedVessel(prisma, lab.id, {
    assetTag: 'VF-100-007',
    kind: 'volumetric-flask',
    deliveryMode: 'contain',
    nominalVolumeMl: '100',
    limitMl: '0.1',
  });
  const balance = await seedBalance(prisma, lab.id, {
    assetTag: 'BAL-03',
    externalCalibrationDate: at('2025-01-10'),
    externalCalibrationDue: at('2026-03-01'),
  });
  const thermometer = await seedInstrument(prisma, lab.id, { assetTag: 'TH-12', calibrationDue: at('2027-06-30') });
  const weight = await seedCheckWeight(prisma, lab.id, { assetTag: 'CW-E2-100', certificateDue: at('2027-06-30') });
  const using = { labId: lab.id, balanceId: balance.id, thermometerId: thermometer.id, reviewerId: people.manager.id };
  const cal = (vesselId: string, performedAt: string, state: 'approved' | 'voided' | 'draft' | 'submitted' = 'approved') =>
    seedCalibrationUsing(prisma, { ...using, vesselId, performerId: people.analyst.id, performedAt: at(performedAt), state });
  const before = await cal(pipette.id, '2025-11-20T09:00:00.000Z');
  const first = await cal(pipette.id, '2026-02-10T08:30:00.000Z');
  const second = await cal(flask.id, '2026-04-02T13:15:00.000Z');
  const exceptional = await prisma.calibration.create({
    data: {
      labId: lab.id,
      vesselId: pipette.id,
      performerId: people.analyst.id,
      enteredById: people.analyst.id,
      balanceId: balance.id,
      thermometerId: thermometer.id,
      state: 'submitted',
      performedAt: at('2026-05-05T10:00:00.000Z'),
      deliveryMode: 'deliver',
      inputs: { points: [{ nominalVolumeMl: '25', replicates: 3 }] },
      results: { meanVolumeMl: '24.9912' },
      verdict: 'pass',
      libraryVersion: 'test',
      submittedAt: at('2026-05-05T10:05:00.000Z'),
      traceabilityException: 'Balance BAL-03 past its external calibration; second balance out for repair',
    },
  });
  const voided = await cal(flask.id, '2026-06-01T07:00:00.000Z', 'voided');
  await cal(flask.id, '2026-06-15T07:00:00.000Z', 'draft');
  const otherVessel = await seedVessel(prisma, otherLab.id, { assetTag: 'PIP-10-B01', nominalVolumeMl: '10', limitMl: '0.02' });
  const otherBalance = await seedBalance(prisma, otherLab.id, { assetTag: 'BAL-B1' });
  const otherThermometer = await seedInstrument(prisma, otherLab.id, { assetTag: 'TH-B1' });
  await seedCalibrationUsing(prisma, {
    labId: otherLab.id,
    vesselId: otherVessel.id,
    performerId: people.otherManager.id,
    balanceId: otherBalance.id,
    thermometerId: otherThermometer.id,
    performedAt: at('2026-03-03T09:00:00.000Z'),
  });

  const factorBase = {
    labId: lab.id,
    personId: people.analyst.id,
    vesselId: pipette.id,
    kind: 'single',
    correctionMl: '-0.01',
    expandedUncertaintyMl: '0.012',
    coverageFactor: '2',
  };
  const newer = await prisma.factor.create({
    data: {
      ...factorBase,
      calibrationId: first.id,
      factor: '0.9996',
      validFrom: first.performedAt,
      validUntil: new Date(first.performedAt.getTime() + 365 * DAY),
    },
  });
  const older = await prisma.factor.create({
    data: {
      ...factorBase,
      calibrationId: before.id,
      factor: '0.9995',
      validFrom: before.performedAt,
      validUntil: new Date(before.performedAt.getTime() + 365 * DAY),
      state: 'superseded',
      endedAt: first.performedAt,
      supersededById: newer.id,
    },
  });
  const check = await prisma.balanceCheck.create({
    data: {
      labId: lab.id,
      balanceId: balance.id,
      performedById: people.analyst.id,
      performedAt: at('2026-02-09T07:00:00.000Z'),
      kind: 'usp41',
      referenceWeightId: weight.id,
      inputs: { repeatability: { readingsG: ['100.0001'] } },
      results: { passed: true },
      minimumWeightG: '0.082',
      passed: true,
      libraryVersion: 'test',
    },
  });
  const quickCheck = await seedBalanceCheck(prisma, balance, people.analyst.id, at('2026-02-10T07:00:00.000Z'));
  return {
    cast,
    pipette,
    flask,
    balance,
    thermometer,
    weight,
    before,
    first,
    second,
    exceptional,
    voided,
    older,
    newer,
    check,
    quickCheck,
  };
}

/** POST /v1/exports, the body kept as bytes whatever its type. */
export function exportAs(t: TestApp, token: string, body: Record<string, unknown>) {
  return t.http
    .post('/v1/exports')
    .set(bearer(token))
    .send(body)
    .buffer(true)
    .parse((res, done) => {
      const chunks: Buffer[] = [];
      res.on('data', (c: Buffer) => chunks.push(c));
      res.on('end', () => {
        const bytes = Buffer.concat(chunks);
        // Refusals are problem documents: parsed, so tests read `code` and `errors`.
        done(
          null,
          /json/.test(String(res.headers['content-type'])) && !/ndjson/.test(String(res.headers['content-type']))
            ? JSON.parse(bytes.toString('utf8'))
            : bytes,
        );
      });
    });
}

export const bytesOf = (res: Response) => res.body as Buffer;
export const sha256 = (bytes: Buffer) => createHash('sha256').update(bytes).digest('hex');
/** The CSV as records (the inventory import's RFC 4180 reader, not the export's writer), with the header as keys. */
export function csvRecords(bytes: Buffer): Record<string, string>[] {
  const [header, ...rows] = parseCsv(bytes.toString('utf8'));
  return rows.map((r) => Object.fromEntries((header ?? []).map((h, i) => [h, r[i] ?? ''])));
}
export const ndjsonRecords = (bytes: Buffer) =>
  bytes
    .toString('utf8')
    .split('\n')
    .filter((l) => l !== '')
    .map((l) => JSON.parse(l) as Record<string, unknown>);
