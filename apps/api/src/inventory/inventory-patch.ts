import { isoDay } from '../due/lab-calendar';
import { invalid } from './inventory.errors';
import type { InventoryRecord } from './inventory-workflow';

/** The record with every member the PATCH sent (null clears); `reason` is not a field. */
export function mergePatch<T extends InventoryRecord>(current: T, patch: object): T {
  const next = { ...current } as Record<string, unknown>;
  for (const [field, value] of Object.entries(patch)) {
    if (field !== 'reason' && value !== undefined && field in current) next[field] = value;
  }
  return next as unknown as T;
}

/** A due date after the calibration date, as the `*_calibration_dates` CHECK constraints want. */
export function assertDueAfter(dateField: string, date: string | null, dueField: string, due: string | null): void {
  if (date !== null && due !== null && due <= date) throw invalid(dueField, `must be after ${dateField} (${date})`);
}

/** Hours the easternmost time zone (UTC+14) is ahead: its calendar date is the latest that is today anywhere. */
const EASTERNMOST_OFFSET_MS = 14 * 3_600_000;

/**
 * A calibration date that has happened: not after today in the easternmost zone, so that no lab's
 * today is refused whatever its zone (a date a day ahead of a western lab's today passes).
 */
export function assertNotFuture(field: string, date: string | null | undefined, now: Date): void {
  if (date && date > isoDay(new Date(now.getTime() + EASTERNMOST_OFFSET_MS))) throw invalid(field, 'must not be in the future');
}
