import type { ItemStatus } from '../inventory/inventory.schemas';
import type { Violation } from './calibration.responses';

/** Everything the traceability rules look at, as of the calibration's performance time. */
export interface TraceabilityFacts {
  readonly performedAt: Date;
  /** The lab's zone: due dates are calendar days there. */
  readonly timeZone: string;
  readonly checkWindowDays: number;
  readonly vessel: { readonly id: string; readonly status: ItemStatus };
  readonly balance: { readonly id: string; readonly status: ItemStatus; readonly externalCalibrationDue: string | null };
  /** The balance's latest routine check at or before performedAt. */
  readonly latestCheck: { readonly performedAt: Date; readonly kind: string; readonly passed: boolean } | null;
  readonly thermometer: { readonly id: string; readonly status: ItemStatus; readonly calibrationDue: string | null };
}

const DAY_MS = 86_400_000;

/** The calendar date (YYYY-MM-DD) of an instant in a time zone. */
export function localDate(at: Date, timeZone: string): string {
  const parts = new Intl.DateTimeFormat('en-US', { timeZone, year: 'numeric', month: '2-digit', day: '2-digit' }).formatToParts(at);
  const part = (type: string) => parts.find((p) => p.type === type)?.value ?? '';
  return `${part('year')}-${part('month')}-${part('day')}`;
}

/**
 * The rules an item used in a calibration must meet at the time it was performed:
 *  - the vessel is in service (never by exception: a manager returns it to service first);
 *  - the balance is in service, its external calibration is not overdue (due date on or after
 *    the performance date, in the lab's zone), and its latest routine check at or before the
 *    performance passed and is at most the lab's window (days of 24 h) old;
 *  - the thermometer is in service and its calibration is not overdue.
 * An item without a due date on record has no traceable calibration. A retired item is never
 * accepted by exception; the other instrument rules may be, where the lab allows exceptions.
 */
export function traceabilityViolations(f: TraceabilityFacts): Violation[] {
  const day = localDate(f.performedAt, f.timeZone);
  const violations: Violation[] = [];
  const add = (rule: Violation['rule'], itemId: string, detail: string, exceptionAllowed: boolean) =>
    violations.push({ rule, itemId, detail, exceptionAllowed });

  if (f.vessel.status !== 'in-service') {
    add(
      'vessel-in-service',
      f.vessel.id,
      `The vessel is ${f.vessel.status}; it must be returned to service before it is calibrated.`,
      false,
    );
  }
  if (f.balance.status !== 'in-service') {
    add('balance-in-service', f.balance.id, `The balance is ${f.balance.status}.`, f.balance.status !== 'retired');
  }
  const balanceDue = overdue(f.balance.externalCalibrationDue, day, 'external calibration');
  if (balanceDue) add('balance-calibration-current', f.balance.id, balanceDue, f.balance.status !== 'retired');
  const check = checkProblem(f);
  if (check) add('balance-check-passed', f.balance.id, check, f.balance.status !== 'retired');

  if (f.thermometer.status !== 'in-service') {
    add('thermometer-in-service', f.thermometer.id, `The thermometer is ${f.thermometer.status}.`, f.thermometer.status !== 'retired');
  }
  const thermometerDue = overdue(f.thermometer.calibrationDue, day, 'calibration');
  if (thermometerDue) add('thermometer-calibration-current', f.thermometer.id, thermometerDue, f.thermometer.status !== 'retired');
  return violations;
}

function overdue(due: string | null, day: string, what: string): string | null {
  if (due === null) return `No ${what} due date is on record.`;
  return due < day ? `The ${what} was due on ${due}; the calibration was performed on ${day}.` : null;
}

function checkProblem(f: TraceabilityFacts): string | null {
  const check = f.latestCheck;
  if (!check) return `No routine check of the balance is recorded at or before ${f.performedAt.toISOString()}.`;
  if (!check.passed) return `The latest routine check before the calibration (${check.kind}, ${check.performedAt.toISOString()}) failed.`;
  if (f.performedAt.getTime() - check.performedAt.getTime() > f.checkWindowDays * DAY_MS) {
    return `The latest routine check (${check.performedAt.toISOString()}) is older than the lab’s window of ${f.checkWindowDays} day(s).`;
  }
  return null;
}
