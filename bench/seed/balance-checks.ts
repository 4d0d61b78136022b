import { METROLOGY_LIBRARY_VERSION } from '@registry/metrology';

import { evaluate } from '../../apps/api/src/balance-checks/balance-check-evaluation';
import type { WeightUsed } from '../../apps/api/src/balance-checks/balance-check.responses';
import type { RecordCheck } from '../../apps/api/src/balance-checks/balance-check.schemas';
import { formatUnits } from './calibration-templates';
import type { SeededRandom } from './random';
import { type Balance, DAY_MS, type Lab, type Person, type Weight, type World, balanceModel, weightOf, workingDays } from './world';

/*
 * Routine balance checks, every one computed by the service's own evaluation (the metrology
 * library): each balance is checked in the morning of the days it is used, a USP <41> check
 * on its first day of each month, a corner-load check now and then. Every check passes but
 * the last one of a few balances, which then stand quarantined (no calibration uses a
 * balance after its last passing check, so that failure reaches no calibration).
 */

export interface CheckRow {
  readonly id: string;
  readonly lab: Lab;
  readonly balance: Balance;
  readonly performer: Person;
  readonly performedAt: Date;
  readonly kind: 'quick' | 'usp41' | 'eccentricity';
  readonly weightId: string;
  readonly inputs: unknown;
  readonly results: unknown;
  readonly minimumWeightG: string | null;
  readonly passed: boolean;
  readonly createdAt: Date;
}

const strip = (s: string) => (s.includes('.') ? s.replace(/0+$/, '').replace(/\.$/, '') : s);

function weightUsed(w: Weight): WeightUsed {
  return {
    id: w.id,
    assetTag: w.assetTag,
    oimlClass: w.oimlClass,
    nominalMassG: String(w.nominalG),
    valueG: strip(w.conventionalMassG),
    valueSource: 'certificate',
    expandedUncertaintyG: strip(w.uncertaintyG),
    certificateDue: w.certificateDue,
  };
}

/** Spreads the checks over the balances and picks each balance's check mornings. */
export function planChecks(world: World, total: number, rnd: SeededRandom): void {
  const days = workingDays(world);
  const balances = world.labs.flatMap((l) => l.balances);
  balances.forEach((b, i) => {
    const count = Math.floor(total / balances.length) + (i < total % balances.length ? 1 : 0);
    b.checkTimes = rnd
      .sample(days.length, Math.min(count, days.length))
      .map((d) => (days[d] as number) + (6 * 60 + rnd.int(0, 45)) * 60_000);
  });
}

/** The checks of one balance, in the order performed. */
export function* checksOf(lab: Lab, balance: Balance, rnd: SeededRandom, ids: SeededRandom): Generator<CheckRow> {
  const model = balanceModel(balance);
  const scale = 10 ** model.decimals;
  const d = 1 / scale;
  const reading = (valueG: number, sdG: number) => formatUnits(Math.round((valueG + rnd.normal(0, sdG)) * scale), model.decimals);
  const checkWeight = weightOf(lab, model.checkWeightG);
  const repWeight = weightOf(lab, model.repeatabilityWeightG);
  const checkValue = Number(checkWeight.conventionalMassG);
  const limit = Number(model.checkLimitG);
  const people = lab.members.filter((p) => p.status === 'active');
  let lastMonth = '';
  let usp41Count = 0;
  for (let i = 0; i < balance.checkTimes.length; i++) {
    const performedAt = new Date(balance.checkTimes[i] as number);
    const month = performedAt.toISOString().slice(0, 7);
    const last = i === balance.checkTimes.length - 1;
    const failing = last && balance.failsAtEnd;
    let body: RecordCheck;
    if (month !== lastMonth && !failing) {
      usp41Count += 1;
      const eccentricity =
        usp41Count % 3 === 0
          ? {
              centreReadingG: reading(checkValue, d),
              offCentreReadingsG: Array.from({ length: 4 }, () => reading(checkValue, limit / 5)),
              limitG: String(limit * 2),
            }
          : undefined;
      body = {
        kind: 'usp41',
        referenceWeightId: checkWeight.id,
        repeatability: {
          readingsG: Array.from({ length: 10 }, () => reading(Number(repWeight.conventionalMassG), d * (0.5 + rnd.next()))),
          referenceWeightId: repWeight.id,
        },
        accuracyReadingG: reading(checkValue, d * 2),
        ...(eccentricity ? { eccentricity } : {}),
      };
    } else if (!failing && rnd.chance(0.02)) {
      body = {
        kind: 'eccentricity',
        referenceWeightId: checkWeight.id,
        centreReadingG: reading(checkValue, d),
        offCentreReadingsG: Array.from({ length: 4 }, () => reading(checkValue, limit / 5)),
        limitG: String(limit * 2),
      };
    } else {
      const deviation = failing
        ? (rnd.chance(0.5) ? 1 : -1) * limit * (1.5 + rnd.next() * 2)
        : Math.max(-0.8, Math.min(0.8, rnd.normal(0, 0.25))) * limit;
      body = {
        kind: 'quick',
        referenceWeightId: checkWeight.id,
        readingsG: [formatUnits(Math.round((checkValue + deviation) * scale), model.decimals)],
        limitG: model.checkLimitG,
      };
    }
    lastMonth = month;
    const weight = weightUsed(checkWeight);
    const ev = evaluate(body, {
      balance: { capacityG: model.capacityG, readabilityG: model.readabilityG },
      weight,
      repeatabilityWeight: body.kind === 'usp41' ? weightUsed(repWeight) : weight,
    });
    const id = ids.uuid();
    const status = failing
      ? { before: 'in-service' as const, after: 'quarantined' as const, reason: `Quarantined: failed ${body.kind} check ${id}.` }
      : { before: 'in-service' as const, after: 'in-service' as const, reason: 'In service; the check passed.' };
    const previous = i > 0 ? new Date(balance.checkTimes[i - 1] as number) : null;
    const impact = failing
      ? {
          subject: { kind: 'balance' as const, id: balance.id },
          since: previous?.toISOString() ?? null,
          reason:
            `${balance.assetTag} failed ${body.kind} check ${id} performed ${performedAt.toISOString()}: ` +
            'calibrations made with it since its last passing check need review',
          calibrations: [],
          factors: [],
        }
      : null;
    const minimumWeightStored = ev.kind === 'usp41' && ev.passed;
    if (minimumWeightStored) {
      balance.minimumWeightG = ev.minimumWeightG;
      balance.minimumWeightAt = performedAt;
    }
    if (failing) balance.status = 'quarantined';
    yield {
      id,
      lab,
      balance,
      performer: rnd.pick(people),
      performedAt,
      kind: ev.kind,
      weightId: checkWeight.id,
      inputs: ev.inputs,
      results: { evaluation: ev.results, balanceStatus: status, minimumWeightStored, impact },
      minimumWeightG: ev.minimumWeightG,
      passed: ev.passed,
      createdAt: new Date(performedAt.getTime() + rnd.int(1, 20) * 60_000),
    };
  }
}

/** Check instants a calibration may follow: every passing check except, for a balance that fails at the end, the last two. */
export function usableCheckTimes(balance: Balance): number[] {
  return balance.failsAtEnd ? balance.checkTimes.slice(0, -2) : balance.checkTimes;
}

export const CHECK_LIBRARY_VERSION = METROLOGY_LIBRARY_VERSION;
export { DAY_MS };
