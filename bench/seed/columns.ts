import type { CopyValue } from './copy-writer';

/* The columns each COPY fills, and the audit entries' shape. */

// prettier-ignore
export const VESSEL_COLUMNS = [
  'id', 'lab_id', 'asset_tag', 'kind', 'delivery_mode', 'nominal_volume_ml', 'graduation_interval_ml',
  'accuracy_class', 'class_standard', 'material', 'expansion_coefficient_per_k', 'maker_serial', 'location',
  'limit_ml', 'limit_source', 'limit_reason', 'status', 'notes', 'version', 'created_at', 'updated_at',
] as const;

// prettier-ignore
export const CALIBRATION_COLUMNS = [
  'id', 'lab_id', 'vessel_id', 'performer_id', 'entered_by_id', 'balance_id', 'thermometer_id', 'state',
  'performed_at', 'delivery_mode', 'air_temperature_c', 'air_pressure_pa', 'air_humidity_percent',
  'air_density_kg_per_m3', 'inputs', 'results', 'verdict', 'library_version', 'notes', 'submitted_at',
  'traceability_exception', 'reviewer_id', 'reviewed_at', 'review_note', 'voided_by_id', 'voided_at', 'void_reason',
  'version', 'created_at', 'updated_at',
] as const;

// prettier-ignore
export const FACTOR_COLUMNS = [
  'id', 'lab_id', 'person_id', 'vessel_id', 'calibration_id', 'kind', 'factor', 'correction_ml', 'curve',
  'expanded_uncertainty_ml', 'coverage_factor', 'reference_temperature_c', 'valid_from', 'valid_until', 'state',
  'ended_at', 'superseded_by_id', 'review_required_at', 'review_reason', 'created_at',
] as const;

// prettier-ignore
export const CHECK_COLUMNS = [
  'id', 'lab_id', 'balance_id', 'performed_by_id', 'performed_at', 'kind', 'reference_weight_id', 'inputs', 'results',
  'minimum_weight_g', 'passed', 'library_version', 'created_at',
];

/** Audit entries written by the seed carry this request id. */
export const REQUEST_ID = 'bench-seed';
// prettier-ignore
export const AUDIT_COLUMNS = [
  'actor_kind', 'actor_id', 'action', 'entity_type', 'entity_id', 'lab_id', 'old_values', 'new_values', 'reason',
  'request_id', 'entry_hash',
];

/** An audit entry as the audit writer would record it; sequence, time and hashes come from the trigger. */
export type AuditRow = readonly [
  actorKind: 'person' | 'system',
  actorId: string | null,
  action: string,
  entityType: string,
  entityId: string,
  labId: string | null,
  oldValues: object | null,
  newValues: object | null,
  reason: string | null,
];

/** Audit rows for COPY: the request id, and an empty hash the chaining trigger replaces. */
export const auditRows = (rows: readonly AuditRow[]) => rows.map((r): CopyValue[] => [...r, REQUEST_ID, '\\x']);
