import { Decimal } from '@registry/metrology';
import type { Response } from 'supertest';

import { bearer, seedBurette, seedCast, seedTraceableInstruments, seedVessel } from '../support/factories';
import type { CalibrationResults } from '../../apps/api/src/calibrations/calibration.responses';
import type { TestApp } from '../support/test-app';

export const HOUR_MS = 3_600_000;
export const DAY_MS = 86_400_000;

/** Standard uncertainties of a typical run (the shape of the gravimetric calculation endpoint). */
export const UNCERTAINTIES = {
  balanceCalibrationG: '0.0002',
  balanceResolutionG: '0.0001',
  waterTemperatureC: '0.05',
  airDensityKgPerM3: '0.005',
  meniscusMl: '0.005',
  evaporationMl: '0',
};

/** Air at the conditions of the ISO 8655-6 Z table: 20 °C, 101.3 kPa. */
export const AIR_20C = { temperatureC: '20', pressurePa: '101300', relativeHumidityPercent: '50' };

/** Replicates of a vessel adjusted to deliver: the weighing vessel goes from 40 g to 40 g + net. */
export const delivered = (nets: readonly string[], waterTemperatureC = '20.0') =>
  nets.map((net) => ({ beforeG: '40.0000', afterG: new Decimal(40).plus(net).toFixed(4), waterTemperatureC }));

/** A lab with its cast, a traceable balance and thermometer (checked two hours ago), a 25 mL pipette and a 50 mL burette. */
export async function calibrationWorld(t: TestApp) {
  const prisma = t.database.prisma;
  const cast = await seedCast(prisma);
  const { balance, thermometer } = await seedTraceableInstruments(prisma, cast.lab.id, cast.people.manager.id, hoursAgo(2));
  const pipette = await seedVessel(prisma, cast.lab.id);
  const burette = await seedBurette(prisma, cast.lab.id);
  return { prisma, cast, balance, thermometer, pipette, burette };
}
export type CalibrationWorld = Awaited<ReturnType<typeof calibrationWorld>>;

/** A create body for a run on a pipette of its own (a fresh 25 mL class A pipette of the lab). */
export async function freshPipetteRun(w: CalibrationWorld, nets: readonly string[], extra: Record<string, unknown> = {}) {
  const vessel = await seedVessel(w.prisma, w.cast.lab.id);
  return pipetteRun(w, nets, { vesselId: vessel.id, ...extra });
}

export const hoursAgo = (hours: number) => new Date(Date.now() - hours * HOUR_MS);

/** A create body for a one-mark pipette run, performed an hour ago. */
export function pipetteRun(w: CalibrationWorld, nets: readonly string[], extra: Record<string, unknown> = {}) {
  return {
    vesselId: w.pipette.id,
    balanceId: w.balance.id,
    thermometerId: w.thermometer.id,
    performedAt: hoursAgo(1).toISOString(),
    airConditions: AIR_20C,
    uncertainties: UNCERTAINTIES,
    points: [{ replicates: delivered(nets) }],
    ...extra,
  };
}

/** A create body for a burette run at 5, 25 and 50 mL (10 %, 50 %, 100 %). */
export function buretteRun(w: CalibrationWorld, nets: Record<'5' | '25' | '50', readonly string[]>, extra: Record<string, unknown> = {}) {
  return {
    vesselId: w.burette.id,
    balanceId: w.balance.id,
    thermometerId: w.thermometer.id,
    performedAt: hoursAgo(1).toISOString(),
    airConditions: AIR_20C,
    uncertainties: UNCERTAINTIES,
    points: (['5', '25', '50'] as const).map((v) => ({ nominalVolumeMl: v, replicates: delivered(nets[v]) })),
    ...extra,
  };
}

/** The calibration endpoints with one person's token. */
export function calibrationsAs(t: TestApp, token: string) {
  const auth = bearer(token);
  return {
    create: (body: unknown) =>
      t.http
        .post('/v1/calibrations')
        .set(auth)
        .send(body as object),
    list: (query: Record<string, string> = {}) => t.http.get('/v1/calibrations').query(query).set(auth),
    get: (id: string) => t.http.get(`/v1/calibrations/${id}`).set(auth),
    patch: (id: string, etag: string, body: unknown) =>
      t.http
        .patch(`/v1/calibrations/${id}`)
        .set(auth)
        .set('if-match', etag)
        .send(body as object),
    act: (id: string, action: 'submit' | 'approve' | 'return' | 'void', etag: string, body: object = {}) =>
      t.http.post(`/v1/calibrations/${id}/${action}`).set(auth).set('if-match', etag).send(body),
  };
}
export type CalibrationsClient = ReturnType<typeof calibrationsAs>;

/** Creates and submits; returns the submitted record's body and ETag. */
export async function createAndSubmit(
  performer: CalibrationsClient,
  body: unknown,
): Promise<{ id: string; etag: string; body: Record<string, unknown> }> {
  const created = expectStatus(await performer.create(body), 201);
  const submitted = expectStatus(await performer.act(created.body.id, 'submit', created.headers.etag as string), 200);
  return { id: created.body.id, etag: submitted.headers.etag as string, body: submitted.body };
}

/** The response when it has the status, or a failure showing the body. */
export function expectStatus(res: Response, status: number): Response {
  expect({ status: res.status, body: res.status === status ? 'ok' : res.body }).toEqual({ status, body: 'ok' });
  return res;
}

/** |actual - expected| <= tolerance, with a readable failure. */
export function expectNear(actual: string, expected: number, tolerance: number): void {
  const diff = Math.abs(Number(actual) - expected);
  expect({ actual, expected, within: diff <= tolerance }).toEqual({ actual, expected, within: true });
}

/** The frozen results of a calibration body, typed. */
export function resultsOf(body: Record<string, unknown>): CalibrationResults {
  expect(body.results).not.toBeNull();
  return body.results as CalibrationResults;
}

/** One point of the results, which must exist. */
export function pointOf(results: CalibrationResults, index: number): CalibrationResults['points'][number] {
  const point = results.points[index];
  if (!point) throw new Error(`no point ${index} in the results`);
  return point;
}
