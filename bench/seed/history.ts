import { METROLOGY_LIBRARY_VERSION } from '@registry/metrology';

import { type CalibrationTemplate, type VesselType, inputsJson, resultsJson } from './calibration-templates';
import { usableCheckTimes } from './balance-checks';
import type { CopyValue } from './copy-writer';
import type { AuditRow } from './columns';
import { type Planned, type State, calibrationLines } from './workflow';
import type { SeededRandom } from './random';
import { DAY_MS, type Lab, type Person, type World } from './world';

/*
 * One batch of vessels with their whole calibration history: the calibrations (most approved,
 * the newest ones in every state of the workflow), the factors their approvals issued (per
 * person and vessel the newest current, the older superseded, withdrawn where the approved
 * calibration was later voided) and the audit entries of each step.
 */

export interface Batch {
  readonly vessels: CopyValue[][];
  readonly calibrations: CopyValue[][];
  readonly factors: CopyValue[][];
  readonly audit: AuditRow[];
  /** Current factors: (person, vessel) pairs a lookup finds. */
  readonly currentPairs: { person: Person; vesselId: string; assetTag: string; indicatedVolumeMl: string }[];
}

const minutes = (n: number) => n * 60_000;

export interface HistoryContext {
  readonly world: World;
  readonly types: readonly VesselType[];
  readonly typeWeights: readonly (readonly [VesselType, number])[];
  readonly labWeights: readonly (readonly [Lab, number])[];
  /** Per-lab counter of asset tags. */
  readonly tagCounters: Map<string, number>;
  readonly factorValidityDays: number;
  /** Every `pairEvery`-th current factor goes to the sample of pairs. */
  readonly pairEvery: number;
  readonly pairCounter: { n: number };
}

/** Calibrations per vessel: `total` spread over `vessels`, varied pairwise so that the sum is exact. */
export function calibrationCounts(total: number, vessels: number, rnd: SeededRandom): Int32Array {
  const counts = new Int32Array(vessels);
  const base = Math.floor(total / vessels);
  for (let i = 0; i < vessels; i++) counts[i] = base + (i < total % vessels ? 1 : 0);
  for (let i = 0; i + 1 < vessels; i += 2) {
    const d = rnd.int(0, Math.floor(Math.min(counts[i] as number, counts[i + 1] as number) * 0.6));
    counts[i] = (counts[i] as number) + d;
    counts[i + 1] = (counts[i + 1] as number) - d;
  }
  return counts;
}

export function buildBatch(ctx: HistoryContext, counts: Int32Array, from: number, to: number, rnd: SeededRandom, ids: SeededRandom): Batch {
  const batch: Batch = { vessels: [], calibrations: [], factors: [], audit: [], currentPairs: [] };
  const asOfMs = ctx.world.asOf.getTime();
  const clamp = (ms: number) => new Date(Math.min(ms, asOfMs - minutes(1)));
  for (let g = from; g < to; g++) {
    const lab = rnd.weighted(ctx.labWeights);
    const type = rnd.weighted(ctx.typeWeights);
    const model = type.model;
    const seq = (ctx.tagCounters.get(lab.id) ?? 0) + 1;
    ctx.tagCounters.set(lab.id, seq);
    const vesselId = ids.uuid();
    const assetTag = `${lab.code}-${model.tag}-${model.nominalMl}-${String(seq).padStart(6, '0')}`;
    const vesselCreated = new Date(ctx.world.historyStart.getTime() - rnd.int(1, 50) * DAY_MS);

    // The history: who calibrated it, when and with which balance (always the morning of a passing check).
    const performers = pickDistinct(lab.members, Math.min(lab.members.length, rnd.int(1, 4)), rnd);
    const balances = lab.balances.filter((b) => b.balanceClass === model.balance && usableCheckTimes(b).length > 0);
    const planned: Planned[] = [];
    const n = counts[g] as number;
    // Each performer recalibrates about yearly, the newest run within the last months (a few people stopped long ago).
    const share = performers.map(() => 0);
    const main = rnd.int(0, performers.length - 1);
    for (let j = 0; j < n; j++) {
      const k = rnd.chance(0.5) ? main : rnd.int(0, performers.length - 1);
      share[k] = (share[k] ?? 0) + 1;
    }
    performers.forEach((performer, k) => {
      const runs = share[k] as number;
      if (runs === 0 || balances.length === 0) return;
      const newest = asOfMs - (rnd.chance(0.9) ? rnd.int(1, 300) : rnd.int(400, 900)) * DAY_MS;
      const span = Math.max(0, newest - ctx.world.historyStart.getTime());
      const interval = runs > 1 ? Math.min(330 * DAY_MS, span / (runs - 1)) : 0;
      for (let i = 0; i < runs; i++) {
        const balance = rnd.pick(balances);
        const target = newest - (runs - 1 - i) * interval - rnd.int(0, 20) * DAY_MS;
        const template = rnd.pick(type.templates);
        planned.push({
          id: ids.uuid(),
          performer,
          balance,
          thermometerId: rnd.pick(lab.thermometers).id,
          performedAt: new Date(checkAtOrBefore(usableCheckTimes(balance), target) + minutes(rnd.int(20, 420))),
          template,
          shift: rnd.int(-template.maxShiftUnits, template.maxShiftUnits),
          state: 'approved',
          voidedAfterApproval: false,
        });
      }
    });
    planned.sort((a, b) => a.performedAt.getTime() - b.performedAt.getTime());
    planned.forEach((p, j) => {
      const newest = j === planned.length - 1;
      if (newest)
        p.state = rnd.weighted<State>([
          ['approved', 80],
          ['submitted', 10],
          ['draft', 5],
          ['returned', 3],
          ['voided', 2],
        ]);
      else if (rnd.chance(0.015)) p.state = 'voided';
      else if (rnd.chance(0.015)) {
        p.state = 'voided';
        p.voidedAfterApproval = true;
      }
    });
    const newest = planned[planned.length - 1];
    const failedLast = newest?.state === 'approved' && newest.template.verdict === 'fail';
    const status = failedLast ? 'quarantined' : rnd.chance(0.015) ? 'retired' : 'in-service';
    const r = type.resolved;
    batch.vessels.push([
      vesselId,
      lab.id,
      assetTag,
      model.kind,
      type.deliveryMode,
      model.nominalMl,
      model.graduationMl,
      model.accuracyClass,
      r.classStandard,
      r.material,
      r.expansionCoefficientPerK,
      `${model.tag}${rnd.int(100_000, 999_999)}`,
      `Room ${rnd.int(1, 3)}.${String(rnd.int(1, 20)).padStart(2, '0')}, bench ${rnd.int(1, 6)}`,
      r.limitMl,
      r.limitSource,
      r.limitReason,
      status,
      null,
      status === 'in-service' ? 1 : 2,
      vesselCreated,
      vesselCreated,
    ]);
    batch.audit.push([
      'system',
      null,
      'create',
      'vessel',
      vesselId,
      lab.id,
      null,
      {
        assetTag,
        kind: model.kind,
        deliveryMode: type.deliveryMode,
        nominalVolumeMl: model.nominalMl,
        accuracyClass: model.accuracyClass,
        limitMl: r.limitMl,
        limitSource: r.limitSource,
        status: 'in-service',
        version: 1,
      },
      'bench data',
    ]);

    // Factors per performer, oldest first.
    const lastFactor = new Map<string, { id: string; row: CopyValue[] }>();
    for (const p of planned) {
      const lines = calibrationLines(p, lab, vesselId, rnd, clamp);
      batch.calibrations.push([
        p.id,
        lab.id,
        vesselId,
        p.performer.id,
        lines.enteredById,
        p.balance.id,
        p.thermometerId,
        p.state,
        p.performedAt,
        type.deliveryMode,
        p.template.air.temperatureC,
        p.template.air.pressurePa,
        p.template.air.relativeHumidityPercent,
        null,
        inputsJson(p.template, p.shift),
        lines.submittedAt ? resultsJson(p.template, lines.submittedAt) : null,
        lines.submittedAt ? p.template.verdict : null,
        lines.submittedAt ? METROLOGY_LIBRARY_VERSION : null,
        null,
        lines.submittedAt,
        null,
        lines.reviewerId,
        lines.reviewedAt,
        lines.reviewNote,
        lines.voidedById,
        lines.voidedAt,
        lines.voidReason,
        lines.version,
        lines.createdAt,
        lines.updatedAt,
      ]);
      const issued = (p.state === 'approved' || p.voidedAfterApproval) && p.template.factor !== null && lines.reviewedAt !== null;
      let factorId: string | null = null;
      if (issued) {
        factorId = ids.uuid();
        const f = p.template.factor as NonNullable<CalibrationTemplate['factor']>;
        const createdAt = lines.reviewedAt as Date;
        const previous = lastFactor.get(p.performer.id);
        if (previous) {
          previous.row[14] = 'superseded';
          previous.row[15] = createdAt;
          previous.row[16] = factorId;
          batch.audit.push([
            'person',
            lines.reviewerId,
            'supersede',
            'factor',
            previous.id,
            lab.id,
            { state: 'current' },
            { state: 'superseded', supersededById: factorId },
            null,
          ]);
        }
        const row: CopyValue[] = [
          factorId,
          lab.id,
          p.performer.id,
          vesselId,
          p.id,
          f.kind,
          f.factor,
          f.correctionMl,
          f.curve ?? null,
          f.expandedUncertaintyMl,
          f.coverageFactor,
          '20',
          p.performedAt,
          new Date(p.performedAt.getTime() + ctx.factorValidityDays * DAY_MS),
          'current',
          null,
          null,
          null,
          null,
          createdAt,
        ];
        batch.factors.push(row);
        lastFactor.set(p.performer.id, { id: factorId, row });
        batch.audit.push([
          'person',
          lines.reviewerId,
          'create',
          'factor',
          factorId,
          lab.id,
          null,
          {
            id: factorId,
            personId: p.performer.id,
            vesselId,
            calibrationId: p.id,
            kind: f.kind,
            factor: f.factor,
            correctionMl: f.correctionMl,
            expandedUncertaintyMl: f.expandedUncertaintyMl,
            state: 'current',
          },
          null,
        ]);
        if (p.voidedAfterApproval) {
          // Withdrawn with its calibration (it was the person's current factor when voided).
          row[14] = 'withdrawn';
          row[15] = lines.voidedAt;
          lastFactor.delete(p.performer.id);
          batch.audit.push([
            'person',
            lines.voidedById,
            'withdraw',
            'factor',
            factorId,
            lab.id,
            { state: 'current' },
            { state: 'withdrawn' },
            `Calibration ${p.id} voided: ${lines.voidReason ?? ''}`,
          ]);
        }
      }
      batch.audit.push(lines.audit(factorId));
    }
    for (const [personId, f] of lastFactor) {
      if (f.row[14] !== 'current' || (f.row[13] as Date).getTime() <= asOfMs) continue;
      const person = performers.find((x) => x.id === personId) as Person;
      if (ctx.pairCounter.n++ % ctx.pairEvery === 0) {
        const template = planned.find((p) => p.id === f.row[4])?.template;
        batch.currentPairs.push({ person, vesselId, assetTag, indicatedVolumeMl: template?.indicatedVolumeMl ?? model.nominalMl });
      }
    }
  }
  return batch;
}

/** The latest check instant at or before `target` (the first one when all are later). */
function checkAtOrBefore(times: readonly number[], target: number): number {
  let lo = 0;
  let hi = times.length - 1;
  if ((times[0] as number) > target) return times[0] as number;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if ((times[mid] as number) <= target) lo = mid;
    else hi = mid - 1;
  }
  return times[lo] as number;
}

function pickDistinct<T>(items: readonly T[], count: number, rnd: SeededRandom): T[] {
  return rnd.sample(items.length, count).map((i) => items[i] as T);
}
