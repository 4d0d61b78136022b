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
