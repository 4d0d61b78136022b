import { MetrologyInputError, type MetrologyWarning } from '@registry/metrology';

/**
 * The library names fields by its own argument names ("filledG", "readingsG[3]",
 * "air.conditions.temperatureC"). The API must name them by the request's dotted
 * path ("replicates.3.filledG"), so every library call goes through one of these.
 */
export type FieldRename = (libraryField: string) => string;

/** "readingsG[3]" -> "readingsG.3" (the path style of validation errors). */
export const dotted = (field: string): string => field.replace(/\[(\d+)\]/g, '.$1');

/** Prefixes every field: `prefixed('airConditions.')`. */
export const prefixed =
  (prefix: string): FieldRename =>
  (field) =>
    `${prefix}${field}`;

/** Rewrites fields by the first matching rule (after `dotted`); unmatched fields pass through. */
export const renamed =
  (rules: readonly (readonly [RegExp, string])[]): FieldRename =>
  (field) => {
    const d = dotted(field);
    const rule = rules.find(([pattern]) => pattern.test(d));
    return rule ? d.replace(rule[0], rule[1]) : d;
  };

/** Runs a library call; a MetrologyInputError leaves with the field renamed to the request path. */
export function withFieldPaths<T>(rename: FieldRename, compute: () => T): T {
  try {
    return compute();
  } catch (error) {
    if (error instanceof MetrologyInputError) throw new MetrologyInputError(rename(dotted(error.field)), error.reason, error.validRange);
    throw error;
  }
}

/** Warnings as the API returns them: the field renamed like errors. */
export interface ApiWarning {
  code: string;
  field?: string;
  message: string;
}

export function renameWarnings(warnings: readonly MetrologyWarning[], rename: FieldRename): ApiWarning[] {
  return warnings.map((w) => ({
    code: w.code,
    ...(w.field === undefined ? {} : { field: rename(dotted(w.field)) }),
    message: w.message,
  }));
}
