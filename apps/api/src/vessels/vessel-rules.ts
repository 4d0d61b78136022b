import {
  type AccuracyClass,
  Decimal,
  listToleranceTables,
  lookupTolerance,
  MetrologyInputError,
  resolveExpansionCoefficient,
  type ToleranceLimit,
  type VesselKind,
} from '@registry/metrology';

import { characterCount } from '../common/plain-text';
import type { FieldError } from '../common/problem/problem-catalog';

/*
 * Rules that make a vessel consistent, shared by create, PATCH and the CSV
 * import. They mirror the CHECK constraints of the vessels table, so the
 * client hears about a problem by field name before the database refuses it.
 */

export const DELIVERY_MODES = ['contain', 'deliver'] as const;
export type DeliveryMode = (typeof DELIVERY_MODES)[number];

/** Kinds whose delivery mode is fixed by what they are; cylinders and "other" say theirs. */
export const FIXED_DELIVERY: Readonly<Partial<Record<VesselKind, DeliveryMode>>> = {
  'volumetric-flask': 'contain',
  'one-mark-pipette': 'deliver',
  'graduated-pipette': 'deliver',
  burette: 'deliver',
  'piston-pipette-fixed': 'deliver',
  'piston-pipette-variable': 'deliver',
};

/** Kinds read against a scale: they need their smallest graduation interval. */
export const GRADUATED_KINDS: readonly VesselKind[] = ['graduated-pipette', 'burette', 'graduated-cylinder'];

export type LimitSource = 'class-table' | 'lab-override' | 'none';

/** What defines a vessel's derived fields, after a create body or a PATCH is merged. */
export interface VesselSpec {
  readonly kind: VesselKind;
  readonly deliveryMode: DeliveryMode | null;
  readonly nominalVolumeMl: string;
  readonly graduationIntervalMl: string | null;
  readonly accuracyClass: AccuracyClass;
  /** A family (ISO, ASTM, USP), a table's standard or id, or another standard named by the lab. */
  readonly classStandard: string | null;
  /** Exactly one of material (from the materials table) and an explicit coefficient. */
  readonly material: string | null;
  readonly expansionCoefficientPerK: string | null;
  /** A lab's own acceptance limit and why; null for the class table. */
  readonly limitOverrideMl: string | null;
  readonly limitOverrideReason: string | null;
}

export interface ResolvedVessel {
  readonly deliveryMode: DeliveryMode;
  readonly graduationIntervalMl: string | null;
  readonly classStandard: string | null;
  readonly material: string | null;
  readonly expansionCoefficientPerK: string;
  readonly limitMl: string | null;
  readonly limitSource: LimitSource;
  readonly limitReason: string | null;
}

export type Resolution = { readonly ok: true; readonly value: ResolvedVessel } | { readonly ok: false; readonly errors: FieldError[] };

const STANDARD_FAMILY = new Map(listToleranceTables().flatMap((t) => [[t.standard, t.family] as const, [t.id, t.family] as const]));

/** The family a stored table standard belongs to (to look a changed vessel up again), or the text itself. */
export const familyOf = (standard: string): string => STANDARD_FAMILY.get(standard) ?? standard;

/** Lookups are pure; a small memo makes bulk imports of similar vessels cheap. */
const LIMIT_MEMO = new Map<string, ToleranceLimit | null>();
const LIMIT_MEMO_SIZE = 1_000;

/** The published limit, or null (no table, or a standard the tables do not know). */
function classLimit(spec: VesselSpec): ToleranceLimit | null {
  const key = [spec.kind, spec.accuracyClass, spec.nominalVolumeMl, spec.classStandard ?? 'ISO'].join('\u0000');
  if (LIMIT_MEMO.has(key)) return LIMIT_MEMO.get(key) ?? null;
  const found = lookupClassLimit(spec);
  if (LIMIT_MEMO.size >= LIMIT_MEMO_SIZE) LIMIT_MEMO.clear();
  LIMIT_MEMO.set(key, found);
  return found;
}

function lookupClassLimit(spec: VesselSpec): ToleranceLimit | null {
  try {
    return lookupTolerance({
      kind: spec.kind,
      accuracyClass: spec.accuracyClass,
      nominalVolumeMl: spec.nominalVolumeMl,
      standard: spec.classStandard ?? 'ISO',
    });
  } catch (error) {
    if (error instanceof MetrologyInputError && error.field === 'standard') return null;
    throw error;
  }
}

/** Checks a vessel and derives delivery mode, expansion coefficient and acceptance limit. */
export function resolveVessel(spec: VesselSpec): Resolution {
  const errors: FieldError[] = [];
  const fixed = FIXED_DELIVERY[spec.kind];
  if (fixed && spec.deliveryMode && spec.deliveryMode !== fixed) {
    errors.push({ field: 'deliveryMode', reason: `must be ${fixed} for a ${spec.kind} (or left out)` });
  }
  if (!fixed && !spec.deliveryMode) errors.push({ field: 'deliveryMode', reason: `is required for a ${spec.kind} (contain or deliver)` });

  if (GRADUATED_KINDS.includes(spec.kind) && spec.graduationIntervalMl === null) {
    errors.push({ field: 'graduationIntervalMl', reason: `is required for a ${spec.kind}` });
  }
  if (spec.graduationIntervalMl !== null && new Decimal(spec.graduationIntervalMl).greaterThan(spec.nominalVolumeMl)) {
    errors.push({ field: 'graduationIntervalMl', reason: 'must not exceed the nominal volume' });
  }

  let expansion: string | null = null;
  if (spec.material !== null && spec.expansionCoefficientPerK !== null) {
    errors.push({ field: 'material', reason: 'give either a material or an expansionCoefficientPerK, not both' });
  } else {
    try {
      expansion = resolveExpansionCoefficient({
        ...(spec.material === null ? {} : { material: spec.material }),
        ...(spec.expansionCoefficientPerK === null ? {} : { expansionCoefficientPerK: spec.expansionCoefficientPerK }),
      }).expansionCoefficientPerK.toFixed();
    } catch (error) {
      if (!(error instanceof MetrologyInputError)) throw error;
      errors.push({ field: error.field, reason: error.reason });
    }
  }

  if (spec.limitOverrideMl !== null && characterCount((spec.limitOverrideReason ?? '').trim()) < 3) {
    errors.push({ field: 'limitOverrideReason', reason: 'is required (at least 3 characters) with a lab override of the limit' });
  }
  if (errors.length > 0 || expansion === null) return { ok: false, errors };

  const table = spec.limitOverrideMl === null ? classLimit(spec) : null;
  const limit =
    spec.limitOverrideMl !== null
      ? { limitMl: spec.limitOverrideMl, limitSource: 'lab-override' as const, limitReason: spec.limitOverrideReason }
      : table
        ? { limitMl: table.limitMl.toFixed(), limitSource: 'class-table' as const, limitReason: null }
        : { limitMl: null, limitSource: 'none' as const, limitReason: null };
  return {
    ok: true,
    value: {
      deliveryMode: fixed ?? (spec.deliveryMode as DeliveryMode),
      graduationIntervalMl: spec.graduationIntervalMl,
      // A limit from a table names that table's standard; otherwise what the lab gave.
      classStandard: table ? table.source : spec.classStandard,
      material: spec.material,
      expansionCoefficientPerK: expansion,
      ...limit,
    },
  };
}

export interface LimitReference {
  readonly standard: string;
  readonly table: string | null;
  readonly tableId: string | null;
  readonly verification: 'checked' | 'from-memory' | null;
  readonly note: string | null;
}

/** Where a class-table limit comes from: the published table, named. */
export function limitReference(v: {
  readonly limitSource: string;
  readonly kind: string;
  readonly accuracyClass: string;
  readonly nominalVolumeMl: string;
  readonly classStandard: string | null;
}): LimitReference | null {
  if (v.limitSource !== 'class-table' || v.classStandard === null) return null;
  const found = classLimit({
    kind: v.kind as VesselKind,
    accuracyClass: v.accuracyClass as AccuracyClass,
    nominalVolumeMl: v.nominalVolumeMl,
    classStandard: v.classStandard,
    deliveryMode: null,
    graduationIntervalMl: null,
    material: null,
    expansionCoefficientPerK: null,
    limitOverrideMl: null,
    limitOverrideReason: null,
  });
  return {
    standard: found?.source ?? v.classStandard,
    table: found?.table ?? null,
    tableId: found?.tableId ?? null,
    verification: found?.verification ?? null,
    note: found?.note ?? null,
  };
}
