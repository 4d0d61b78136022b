import { Decimal, dec, type DecimalInput } from './decimal';
import { MetrologyInputError } from './errors';
import {
  ACCURACY_CLASSES,
  TOLERANCE_TABLES,
  VESSEL_KINDS,
  type AccuracyClass,
  type StandardFamily,
  type ToleranceTable,
  type Verification,
  type VesselKind,
} from './tolerance-tables';

export type { AccuracyClass, StandardFamily, ToleranceRow, ToleranceTable, Verification, VesselKind } from './tolerance-tables';
export { ACCURACY_CLASSES, VESSEL_KINDS } from './tolerance-tables';

export interface ToleranceQuery {
  readonly kind: VesselKind;
  readonly accuracyClass: AccuracyClass;
  /** Nominal volume in mL; for a variable piston pipette, its largest (nominal) volume. */
  readonly nominalVolumeMl: DecimalInput;
  /** A family ('ISO' — the default — 'ASTM', 'USP'), a standard ('ISO 648:2008') or a table id. */
  readonly standard?: StandardFamily | string;
}

export interface ToleranceLimit {
  /** ± mL; the systematic-error limit for piston pipettes. */
  readonly limitMl: Decimal;
  /** Random-error limit (standard deviation), mL, where the standard sets one. */
  readonly randomLimitMl?: Decimal;
  readonly source: string;
  readonly table: string;
  readonly tableId: string;
  readonly verification: Verification;
  readonly note?: string;
}

const FAMILIES: readonly string[] = ['ISO', 'ASTM', 'USP'];

function selectTables(standard: string | undefined): readonly ToleranceTable[] {
  const wanted = standard ?? 'ISO';
  if (FAMILIES.includes(wanted)) return TOLERANCE_TABLES.filter((t) => t.family === wanted);
  const tables = TOLERANCE_TABLES.filter((t) => t.standard === wanted || t.id === wanted);
  if (tables.length === 0) {
    throw new MetrologyInputError('standard', `is not a known family, standard or table (${FAMILIES.join(', ')} or a table id)`);
  }
  return tables;
}

/**
 * The maximum permissible error for a vessel from the published tables, or
 * null when none is known (kind 'other', a class the standard does not have,
 * a nominal volume not in the table). Never interpolates between sizes.
 */
export function lookupTolerance(query: ToleranceQuery): ToleranceLimit | null {
  if (!VESSEL_KINDS.includes(query.kind)) throw new MetrologyInputError('kind', `must be one of ${VESSEL_KINDS.join(', ')}`);
  if (!ACCURACY_CLASSES.includes(query.accuracyClass)) {
    throw new MetrologyInputError('accuracyClass', `must be one of ${ACCURACY_CLASSES.join(', ')}`);
  }
  const nominal = dec(query.nominalVolumeMl, 'nominalVolumeMl');
  if (!nominal.greaterThan(0)) throw new MetrologyInputError('nominalVolumeMl', 'must be greater than 0');
  const cls = query.accuracyClass;
  for (const table of selectTables(query.standard)) {
    if (!table.kinds.includes(query.kind) || !table.classes.includes(cls)) continue;
    const row = table.rows.find((r) => nominal.equals(r.nominalMl));
    const limit = row?.limitMl[cls];
    if (!row || limit === undefined) continue;
    const random = row.randomLimitMl?.[cls];
    const verification: Verification = row.fromMemory ? 'from-memory' : (table.verification[cls] ?? 'from-memory');
    return {
      limitMl: new Decimal(limit),
      ...(random === undefined ? {} : { randomLimitMl: new Decimal(random) }),
      source: table.standard,
      table: table.table,
      tableId: table.id,
      verification,
      ...(table.note === undefined ? {} : { note: table.note }),
    };
  }
  return null;
}

/** Plain, serialisable copies of every table, for a reference endpoint. */
export function listToleranceTables(): ToleranceTable[] {
  return TOLERANCE_TABLES.map((t) => ({
    ...t,
    kinds: [...t.kinds],
    classes: [...t.classes],
    verification: { ...t.verification },
    rows: t.rows.map((r) => ({
      ...r,
      limitMl: { ...r.limitMl },
      ...(r.randomLimitMl ? { randomLimitMl: { ...r.randomLimitMl } } : {}),
    })),
  }));
}

export interface LabOverride {
  /** The laboratory's own acceptance limit, ± mL; replaces the table's systematic limit. */
  readonly limitMl: DecimalInput;
  /** Replaces the table's random-error limit when given; otherwise the table's stays. */
  readonly randomLimitMl?: DecimalInput;
  /** Why the laboratory departs from the published class limit (required). */
  readonly reason: string;
}

export interface VerdictInput {
  /** Systematic error (mean − nominal), mL. */
  readonly errorMl: DecimalInput;
  /** The table limit, or null when none is known. */
  readonly limitMl: DecimalInput | null;
  /** Random error (standard deviation), mL. Required when a random limit applies. */
  readonly randomErrorMl?: DecimalInput;
  readonly randomLimitMl?: DecimalInput | null;
  readonly labOverride?: LabOverride;
}

export interface VerdictResult {
  readonly verdict: 'pass' | 'fail' | 'no-limit';
  readonly reasons: readonly string[];
  readonly limitMl: Decimal | null;
  readonly randomLimitMl: Decimal | null;
  readonly limitSource: 'lab-override' | 'table' | 'none';
  readonly overrideReason?: string;
}

function limitOrNull(value: DecimalInput | null | undefined, field: string): Decimal | null {
  if (value === null || value === undefined) return null;
  const d = dec(value, field);
  if (!d.greaterThan(0)) throw new MetrologyInputError(field, 'must be greater than 0');
  return d;
}

/**
 * Pass or fail against a limit: |systematic error| ≤ limit and, where a random
 * limit applies, random error ≤ random limit (limits inclusive). A laboratory
 * override (with its reason) wins over the table. Without any limit the
 * verdict is 'no-limit': a qualified person decides.
 */
export function verdict(input: VerdictInput): VerdictResult {
  const error = dec(input.errorMl, 'errorMl');
  const override = input.labOverride;
  if (override && !(typeof override.reason === 'string' && override.reason.trim().length > 0)) {
    throw new MetrologyInputError('labOverride.reason', 'is required when a laboratory limit replaces the table');
  }
  const limit = override ? limitOrNull(override.limitMl, 'labOverride.limitMl') : limitOrNull(input.limitMl, 'limitMl');
  const randomLimit =
    override?.randomLimitMl !== undefined
      ? limitOrNull(override.randomLimitMl, 'labOverride.randomLimitMl')
      : limitOrNull(input.randomLimitMl, 'randomLimitMl');
  const base = {
    limitMl: limit,
    randomLimitMl: randomLimit,
    ...(override ? { overrideReason: override.reason.trim() } : {}),
  };
  if (limit === null) {
    return {
      ...base,
      verdict: 'no-limit',
      limitSource: 'none',
      reasons: ['No maximum permissible error is known for this vessel; a qualified person decides.'],
    };
  }
  const reasons: string[] = [];
  let pass = true;
  if (error.abs().lessThanOrEqualTo(limit)) {
    reasons.push(`Systematic error ${error.toString()} mL is within ±${limit.toString()} mL.`);
  } else {
    pass = false;
    reasons.push(`Systematic error ${error.toString()} mL exceeds ±${limit.toString()} mL.`);
  }
  if (randomLimit !== null) {
    if (input.randomErrorMl === undefined) {
      throw new MetrologyInputError('randomErrorMl', 'is required when a random-error limit applies');
    }
    const random = dec(input.randomErrorMl, 'randomErrorMl');
    if (random.isNegative()) throw new MetrologyInputError('randomErrorMl', 'must not be negative');
    if (random.lessThanOrEqualTo(randomLimit)) {
      reasons.push(`Random error ${random.toString()} mL is within ${randomLimit.toString()} mL.`);
    } else {
      pass = false;
      reasons.push(`Random error ${random.toString()} mL exceeds ${randomLimit.toString()} mL.`);
    }
  }
  if (override) reasons.push(`Laboratory limit used instead of the table: ${override.reason.trim()}`);
  return { ...base, verdict: pass ? 'pass' : 'fail', limitSource: override ? 'lab-override' : 'table', reasons };
}
