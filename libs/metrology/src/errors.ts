/** A closed interval with its unit, as declared by a published method. */
export interface ValidRange {
  readonly min?: string;
  readonly max?: string;
  readonly unit: string;
}

/**
 * An input the computation refuses: impossible (negative mass, filled lighter
 * than empty) or outside the validity range of the published method. The API
 * maps it to a 422 problem naming `field` and, when known, `validRange`.
 */
export class MetrologyInputError extends Error {
  override readonly name = 'MetrologyInputError';
  constructor(
    readonly field: string,
    readonly reason: string,
    readonly validRange?: ValidRange,
  ) {
    super(`${field} ${reason}`);
  }
}

/** A result that is computed but deserves a second look (e.g. near a range limit). */
export interface MetrologyWarning {
  readonly code: string;
  readonly field?: string;
  readonly message: string;
}

/** Throws unless min <= value <= max (bounds given as numbers in the stated unit). */
export function requireInRange(
  field: string,
  value: { lessThan(n: number): boolean; greaterThan(n: number): boolean },
  min: number,
  max: number,
  unit: string,
  method?: string,
): void {
  if (value.lessThan(min) || value.greaterThan(max)) {
    const by = method ? ` for ${method}` : '';
    throw new MetrologyInputError(field, `must be between ${min} and ${max} ${unit}${by}`, {
      min: String(min),
      max: String(max),
      unit,
    });
  }
}
