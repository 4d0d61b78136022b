import DecimalJs from 'decimal.js';

import { MetrologyInputError } from './errors';

/**
 * The one Decimal constructor of the computation library: 34 significant digits
 * (IEEE 754 decimal128), round half to even. Every quantity is one of these.
 */
export const Decimal = DecimalJs.clone({ precision: 34, rounding: DecimalJs.ROUND_HALF_EVEN });
export type Decimal = InstanceType<typeof Decimal>;

/** What callers may pass for a quantity: a Decimal, a decimal string or a finite number. */
export type DecimalInput = DecimalJs.Value;

/** Converts an input to a Decimal, refusing NaN and infinities. */
export function dec(value: DecimalInput, field = 'value'): Decimal {
  // Decimals are immutable: one of ours is returned as it is, not copied.
  if (value instanceof Decimal) {
    if (!value.isFinite()) throw new MetrologyInputError(field, 'must be a finite number');
    return value;
  }
  let d: Decimal;
  try {
    d = new Decimal(value);
  } catch {
    throw new MetrologyInputError(field, 'is not a number');
  }
  if (!d.isFinite()) throw new MetrologyInputError(field, 'must be a finite number');
  return d;
}
