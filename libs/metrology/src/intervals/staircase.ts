import { MetrologyInputError } from '../errors';

/*
 * Adaptive recalibration intervals by the "staircase" (automatic adjustment)
 * method of ILAC-G24:2007 / OIML D 10:2007 (one document, two names), section
 * 6.2 "Method 1: automatic adjustment or staircase (calendar-time)" (section
 * number from memory): each time an item is calibrated on schedule, the next
 * interval is lengthened when it was found within tolerance and shortened when
 * it was not. The document leaves the step sizes to the laboratory; it also
 * warns that the method reacts to single results and that intervals should
 * stay within sensible bounds (from memory).
 *
 * Our rule (the step sizes are our choice, common practice, not from the document):
 * - a run of `lengthenAfterPasses` in-tolerance results in a row lengthens the
 *   interval by a quarter, at most `maxStepDays`, never above `maxIntervalDays`;
 *   the run then starts again;
 * - an out-of-tolerance result shortens it by half, at most `maxStepDays`,
 *   never below `minIntervalDays`, and ends the run. It never lengthens an
 *   interval, even one already below the minimum (which then stays as it is).
 */

/** Lengthening step: a quarter of the interval in force (our choice). */
export const LENGTHEN_FRACTION = 0.25;
/** Shortening step: half of the interval in force (our choice: react faster to a failure than to a pass). */
export const SHORTEN_FRACTION = 0.5;
/** Intervals are whole days from 1 day to 10 years (the registry's range). */
export const MAX_INTERVAL_DAYS = 3660;

export interface StaircaseRule {
  readonly minIntervalDays: number;
  readonly maxIntervalDays: number;
  readonly maxStepDays: number;
  /** In-tolerance results in a row that lengthen the interval once. */
  readonly lengthenAfterPasses: number;
}

export interface StaircaseState {
  readonly intervalDays: number;
  /** In-tolerance results in a row since the last change (or the last failure). */
  readonly passesInRow: number;
}

export type ResultOutcome = 'in-tolerance' | 'out-of-tolerance';

export interface StaircaseStep extends StaircaseState {
  readonly change: 'lengthened' | 'shortened' | 'unchanged';
  /** Plain words for the change record. */
  readonly reason: string;
}

const wholeDays = (field: string, value: number, min: number, max: number) => {
  if (!Number.isInteger(value) || value < min || value > max) {
    throw new MetrologyInputError(field, `must be a whole number of days from ${min} to ${max}`, {
      min: String(min),
      max: String(max),
      unit: 'd',
    });
  }
};

/** Throws MetrologyInputError unless the rule is consistent (min <= max, steps and runs of at least one). */
export function validateStaircaseRule(rule: StaircaseRule): void {
  wholeDays('minIntervalDays', rule.minIntervalDays, 1, MAX_INTERVAL_DAYS);
  wholeDays('maxIntervalDays', rule.maxIntervalDays, rule.minIntervalDays, MAX_INTERVAL_DAYS);
  wholeDays('maxStepDays', rule.maxStepDays, 1, MAX_INTERVAL_DAYS);
  if (!Number.isInteger(rule.lengthenAfterPasses) || rule.lengthenAfterPasses < 1 || rule.lengthenAfterPasses > 20) {
    throw new MetrologyInputError('lengthenAfterPasses', 'must be a whole number from 1 to 20', { min: '1', max: '20', unit: 'results' });
  }
}

/** The interval and run after one more result. */
export function staircaseStep(rule: StaircaseRule, state: StaircaseState, outcome: ResultOutcome): StaircaseStep {
  validateStaircaseRule(rule);
  wholeDays('intervalDays', state.intervalDays, 1, MAX_INTERVAL_DAYS);
  const current = state.intervalDays;
  if (outcome === 'out-of-tolerance') {
    const step = Math.min(rule.maxStepDays, Math.max(1, Math.ceil(current * SHORTEN_FRACTION)));
    const next = Math.min(current, Math.max(rule.minIntervalDays, current - step));
    return {
      intervalDays: next,
      passesInRow: 0,
      change: next < current ? 'shortened' : 'unchanged',
      reason:
        next < current
          ? `out of tolerance: shortened from ${current} to ${next} days`
          : `out of tolerance: kept at ${current} days (at or below the minimum of ${rule.minIntervalDays})`,
    };
  }
  const passes = state.passesInRow + 1;
  if (passes < rule.lengthenAfterPasses) {
    return {
      intervalDays: current,
      passesInRow: passes,
      change: 'unchanged',
      reason: `in tolerance: ${passes} of ${rule.lengthenAfterPasses} in a row`,
    };
  }
  const step = Math.min(rule.maxStepDays, Math.max(1, Math.ceil(current * LENGTHEN_FRACTION)));
  const next = Math.max(current, Math.min(rule.maxIntervalDays, current + step));
  return {
    intervalDays: next,
    passesInRow: 0,
    change: next > current ? 'lengthened' : 'unchanged',
    reason:
      next > current
        ? `in tolerance ${passes} times in a row: lengthened from ${current} to ${next} days`
        : `in tolerance ${passes} times in a row: kept at ${current} days (the maximum is ${rule.maxIntervalDays})`,
  };
}
