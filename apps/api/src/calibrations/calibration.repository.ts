import { Injectable } from '@nestjs/common';
import { Prisma } from '@registry/data';

import type { Tx } from '../inventory/inventory-workflow';
import type { DeliveryMode } from '../vessels/vessel-rules';
import type { CalibrationInputs, CalibrationResults, Verdict } from './calibration.responses';
import type { CalibrationState } from './calibration.schemas';

/** A calibration as the services see it; Prisma types stay in this file. */
export interface CalibrationRecord {
  readonly id: string;
  readonly labId: string;
  readonly vesselId: string;
  readonly performerId: string;
  readonly enteredById: string;
  readonly balanceId: string;
  readonly thermometerId: string;
  readonly state: CalibrationState;
  readonly performedAt: Date;
  readonly deliveryMode: DeliveryMode;
  readonly inputs: CalibrationInputs;
  readonly results: CalibrationResults | null;
  readonly verdict: Verdict | null;
  readonly libraryVersion: string | null;
  readonly notes: string | null;
  readonly submittedAt: Date | null;
  readonly traceabilityException: string | null;
  readonly reviewerId: string | null;
  readonly reviewedAt: Date | null;
  readonly reviewNote: string | null;
  readonly voidedById: string | null;
  readonly voidedAt: Date | null;
  readonly voidReason: string | null;
  readonly version: number;
  readonly createdAt: Date;
  readonly updatedAt: Date;
}

export type NewCalibration = Pick<
  CalibrationRecord,
  'labId' | 'vesselId' | 'performerId' | 'enteredById' | 'balanceId' | 'thermometerId' | 'performedAt' | 'deliveryMode' | 'inputs' | 'notes'
>;

/** What a draft edit may change. */
export type DraftChanges = Partial<Pick<CalibrationRecord, 'balanceId' | 'thermometerId' | 'performedAt' | 'inputs' | 'notes'>>;

/** The columns a state transition writes (the database trigger guards which ones may change). */
export type TransitionData = Partial<
  Pick<
    CalibrationRecord,
    | 'state'
    | 'results'
    | 'verdict'
    | 'libraryVersion'
    | 'submittedAt'
    | 'traceabilityException'
    | 'reviewerId'
    | 'reviewedAt'
    | 'reviewNote'
    | 'voidedById'
    | 'voidedAt'
    | 'voidReason'
  >
>;

export interface CalibrationFilters {
  /** Labs the caller may read, or every lab. */
  readonly labs: 'all' | readonly string[];
  readonly labId?: string | undefined;
  readonly vesselId?: string | undefined;
  readonly performerId?: string | undefined;
  readonly state?: CalibrationState | undefined;
  readonly performedFrom?: Date | undefined;
  readonly performedTo?: Date | undefined;
  /** Keyset: rows after (performedAt, id) in descending order. */
  readonly after?: { readonly performedAt: Date; readonly id: string } | undefined;
  readonly take: number;
}

export interface FactorRef {
  readonly id: string;
  readonly state: 'current' | 'superseded' | 'withdrawn';
}

type Row = Prisma.CalibrationGetPayload<object>;

function toRecord(row: Row): CalibrationRecord {
  return {
    ...row,
    state: row.state as CalibrationState,
    deliveryMode: row.deliveryMode as DeliveryMode,
    inputs: row.inputs as unknown as CalibrationInputs,
    results: row.results as unknown as CalibrationResults | null,
    verdict: row.verdict as Verdict | null,
  };
}

/** The air columns summarise the stored inputs (the inputs keep the exact values). */
function airColumns(inputs: CalibrationInputs) {
  const air = inputs.airConditions;
  return {
    airTemperatureC: air?.temperatureC ?? null,
    airPressurePa: air?.pressurePa ?? null,
    airHumidityPercent: air?.relativeHumidityPercent ?? null,
    airDensityKgPerM3: inputs.airDensityKgPerM3 ?? null,
  };
}

const json = (value: unknown) => value as Prisma.InputJsonValue;

@Injectable()
export class CalibrationRepository {
  async findById(tx: Tx, id: string): Promise<CalibrationRecord | null> {
    const row = await tx.calibration.findUnique({ where: { id } });
    return row ? toRecord(row) : null;
  }

  async insert(tx: Tx, c: NewCalibration, now: Date): Promise<CalibrationRecord> {
    const row = await tx.calibration.create({
      data: { ...c, ...airColumns(c.inputs), inputs: json(c.inputs), state: 'draft', createdAt: now, updatedAt: now },
    });
    return toRecord(row);
  }

  /**
   * Changes a draft or returned record still at version `expected`; null otherwise. The results
   * of an earlier submission no longer match edited inputs: they are cleared (the submission's
   * audit entry keeps them).
   */
  async updateDraft(tx: Tx, id: string, expected: number, changes: DraftChanges, now: Date): Promise<CalibrationRecord | null> {
    const { inputs, ...rest } = changes;
    const data: Prisma.CalibrationUncheckedUpdateManyInput = {
      ...rest,
      ...(inputs ? { inputs: json(inputs), ...airColumns(inputs) } : {}),
      results: Prisma.DbNull,
      verdict: null,
      libraryVersion: null,
      submittedAt: null,
      version: { increment: 1 },
      updatedAt: now,
    };
    const { count } = await tx.calibration.updateMany({ where: { id, version: expected, state: { in: ['draft', 'returned'] } }, data });
    return count === 1 ? this.findById(tx, id) : null;
  }

  /** Moves a record in one of `from` states, still at version `expected`; null otherwise. */
  async transition(
    tx: Tx,
    id: string,
    expected: number,
    from: readonly CalibrationState[],
    change: TransitionData,
    now: Date,
  ): Promise<CalibrationRecord | null> {
    const { results, ...rest } = change;
    const data: Prisma.CalibrationUncheckedUpdateManyInput = {
      ...rest,
      ...(results === undefined ? {} : { results: json(results) }),
      version: { increment: 1 },
      updatedAt: now,
    };
    const { count } = await tx.calibration.updateMany({ where: { id, version: expected, state: { in: [...from] } }, data });
    return count === 1 ? this.findById(tx, id) : null;
  }

  /** Newest first (performedAt, then id), `take` rows after the cursor. */
  async list(tx: Tx, f: CalibrationFilters): Promise<CalibrationRecord[]> {
    const and: Prisma.CalibrationWhereInput[] = [];
    if (f.labs !== 'all') and.push({ labId: { in: [...f.labs] } });
    if (f.labId) and.push({ labId: f.labId });
    if (f.vesselId) and.push({ vesselId: f.vesselId });
    if (f.performerId) and.push({ performerId: f.performerId });
    if (f.state) and.push({ state: f.state });
    if (f.performedFrom) and.push({ performedAt: { gte: f.performedFrom } });
    if (f.performedTo) and.push({ performedAt: { lt: f.performedTo } });
    if (f.after) {
      const { performedAt, id } = f.after;
      and.push({ OR: [{ performedAt: { lt: performedAt } }, { performedAt, id: { lt: id } }] });
    }
    const rows = await tx.calibration.findMany({
      where: { AND: and },
      orderBy: [{ performedAt: 'desc' }, { id: 'desc' }],
      take: f.take,
    });
    return rows.map(toRecord);
  }

  /** The factor issued from each calibration, if any. */
  async factorsOf(tx: Tx, calibrationIds: readonly string[]): Promise<Map<string, FactorRef>> {
    if (calibrationIds.length === 0) return new Map();
    const rows = await tx.factor.findMany({
      where: { calibrationId: { in: [...calibrationIds] } },
      select: { id: true, state: true, calibrationId: true },
    });
    return new Map(rows.map((r) => [r.calibrationId, { id: r.id, state: r.state as FactorRef['state'] }]));
  }
}
