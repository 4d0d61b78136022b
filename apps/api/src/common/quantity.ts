import { Decimal, MetrologyInputError } from '@registry/metrology';
import { z } from 'zod';

/**
 * Quantities at the HTTP edge.
 *
 * In: a JSON number or a plain decimal string ("20.5", "-0.003", "1.2e-3"), at most
 * 40 characters, no spaces, thousands separators or decimal commas. NaN, Infinity,
 * empty strings and magnitudes outside [1e-15, 1e15] (other than 0) are refused with
 * 400, so every accepted value is finite in binary64 too ("1e309" is refused).
 * The parsed value is the decimal string itself: no binary rounding happens on the way in.
 *
 * Out: decimal strings in plain notation (never an exponent), rounded to
 * OUTPUT_SIGNIFICANT_DIGITS significant digits, half to even, trailing zeros dropped
 * ("998.206745560" is returned as "998.20674556"). Magnitudes below 1e-30 are written
 * "0"; a result that is not finite or reaches 1e30 is not reported but refused (422):
 * it can only come from inputs far outside any method's range, and its plain notation
 * could run to millions of digits.
 */
export const OUTPUT_SIGNIFICANT_DIGITS = 12;
const OUTPUT_MIN_MAGNITUDE = new Decimal('1e-30');
const OUTPUT_MAX_MAGNITUDE = new Decimal('1e30');

const DECIMAL_PATTERN = /^-?(?:\d+(?:\.\d+)?|\.\d+)(?:[eE][+-]?\d{1,4})?$/;
const MAX_LENGTH = 40;

const MIN_MAGNITUDE = new Decimal('1e-15');
const MAX_MAGNITUDE = new Decimal('1e15');

const inRange = (v: unknown): boolean => {
  // Malformed values are reported by the type or pattern check; this one judges only magnitude,
  // in Decimal: Number("1e-400") would underflow to 0 and slip through.
  const wellFormed = (typeof v === 'number' && Number.isFinite(v)) || (typeof v === 'string' && DECIMAL_PATTERN.test(v));
  if (!wellFormed) return true;
  const d = new Decimal(v as number | string).abs();
  return d.isZero() || (d.greaterThanOrEqualTo(MIN_MAGNITUDE) && d.lessThan(MAX_MAGNITUDE));
};

/** Schema option: a missing member reads "is required" rather than zod's type message. */
export const REQUIRED = { error: (issue: { input?: unknown }) => (issue.input === undefined ? 'is required' : undefined) };

/** A quantity in a request; `description` says what and in which unit. */
export function quantity(description: string, example?: string) {
  return z
    .union(
      [
        z.number(),
        z
          .string()
          .max(MAX_LENGTH, { error: `must be at most ${MAX_LENGTH} characters` })
          .regex(DECIMAL_PATTERN, {
            error: 'must be a plain decimal number such as "20.5" or "1.2e-3" (point as separator, no unit)',
          }),
      ],
      { error: (issue) => (issue.input === undefined ? 'is required' : 'must be a finite number or a decimal string') },
    )
    .refine(inRange, { error: 'must be 0 or have a magnitude between 1e-15 and 1e15' })
    .transform((v) => String(v))
    .meta({ description, ...(example === undefined ? {} : { example }) });
}

/** A decimal string in a response. */
export function decimalString(description: string) {
  return z.string().meta({ description: `${description} (decimal string, plain notation)` });
}

/** The wire form of a computed value: see the rule above. */
export function formatDecimal(value: Decimal): string {
  if (!value.isFinite() || value.abs().greaterThanOrEqualTo(OUTPUT_MAX_MAGNITUDE)) {
    throw new MetrologyInputError(
      '(body)',
      'gives a result that is not finite or too large to report: check the inputs against the method',
    );
  }
  if (value.abs().lessThan(OUTPUT_MIN_MAGNITUDE)) return '0';
  return value.toSignificantDigits(OUTPUT_SIGNIFICANT_DIGITS).toFixed();
}

/** An input (or a reference value such as "9.9e-6") echoed back: exact, in plain notation; inputs are bounded, so it stays short. */
export function echoDecimal(value: Decimal | string): string {
  const d = new Decimal(value);
  return d.isZero() ? '0' : d.toFixed();
}

/** Like formatDecimal, but an infinite value (e.g. degrees of freedom) becomes null. */
export function formatOrInfinite(value: Decimal): string | null {
  return value.isFinite() ? formatDecimal(value) : null;
}
