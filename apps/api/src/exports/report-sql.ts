/*
 * The SELECT behind each report. Every query takes the same five parameters:
 *   $1 every lab (boolean)  $2 the lab ids (uuid[])  $3 period start  $4 period end (exclusive)  $5 as-of
 * and renders every value as text the way it is stored: decimals as written (numeric::text),
 * instants in ISO 8601 UTC with milliseconds (microseconds for the audit trail), dates as
 * YYYY-MM-DD. Rows are filtered by their own timestamps against the as-of instant (recorded,
 * submitted, reviewed, voided, ended <= as-of), so the same request read later gives the same rows.
 * Each query has a total order, so the same rows come in the same order.
 */

export const iso = (expr: string) => `to_char((${expr}) AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"')`;
const isoMicro = (expr: string) => `to_char((${expr}) AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.US"Z"')`;
const day = (expr: string) => `to_char(${expr}, 'YYYY-MM-DD')`;
const inLabs = (column: string) => `($1::boolean OR ${column} = ANY($2::uuid[]))`;
/** A value recorded at `at`, shown only when `at` is not after the as-of instant. */
const asOfOnly = (at: string, value: string) => `CASE WHEN ${at} <= $5 THEN ${value} END`;

/** The as-of date of a lab: the calendar day of the as-of instant in the lab's time zone. */
const asOfDay = (lab: string) => `(($5::timestamptz) AT TIME ZONE ${lab}.time_zone)::date`;

/**
 * Every item of the registry with its status as of $5: the status the latest audited change at or
 * before $5 set; failing that, the status the first later change started from; failing that
 * (no audited status change at all), the status it has now.
 */
const ITEMS = `
  SELECT 'vessel' AS item_kind, v.id, v.lab_id, v.asset_tag, v.kind AS item_type,
         v.nominal_volume_ml::text || ' mL' AS size, v.status, v.created_at,
         NULL::date AS due_column, NULL::text AS calibrated_on, NULL::text AS certificate
    FROM vessels v
  UNION ALL
  SELECT 'balance', b.id, b.lab_id, b.asset_tag, 'balance', b.capacity_g::text || ' g / d ' || b.readability_g::text || ' g',
         b.status, b.created_at, b.external_calibration_due, ${day('b.external_calibration_date')}, b.external_calibration_certificate
    FROM balances b
  UNION ALL
  SELECT 'reference-weight', w.id, w.lab_id, w.asset_tag, 'weight ' || w.oiml_class, w.nominal_mass_g::text || ' g',
         w.status, w.created_at, w.certificate_due, NULL, w.certificate_number
    FROM reference_weights w
  UNION ALL
  SELECT 'instrument', i.id, i.lab_id, i.asset_tag, i.kind, NULL, i.status, i.created_at, i.calibration_due,
         ${day('i.calibration_date')}, i.certificate_number
    FROM instruments i`;

const STATUS_AS_OF = `coalesce(
    (SELECT a.new_values->>'status' FROM audit_entries a
      WHERE a.entity_type = it.item_kind AND a.entity_id = it.id::text AND a.occurred_at <= $5 AND a.new_values ? 'status'
      ORDER BY a.seq DESC LIMIT 1),
    (SELECT a.old_values->>'status' FROM audit_entries a
      WHERE a.entity_type = it.item_kind AND a.entity_id = it.id::text AND a.occurred_at > $5 AND a.old_values ? 'status'
      ORDER BY a.seq LIMIT 1),
    it.status)`;

/**
 * The item's next due date from the due-date feature's contract (the due_items view): the
 * earliest of the item's own subjects (a balance has two: external calibration and routine check);
 * personal factors are reported on their own.
 */
const NEXT_DUE = `(SELECT min(d.due_on) FROM due_items d
     WHERE d.subject_id = it.id AND d.person_id IS NULL
       AND d.subject_kind = ANY(CASE it.item_kind WHEN 'balance' THEN ARRAY['balance-calibration', 'balance-check']
                                                  ELSE ARRAY[it.item_kind] END))`;

/**
 * Items of the labs asked for, recorded by $5, with their status as of $5 and their next due date.
 * The period does not narrow a register of items; $3 and $4 are only typed here, since every
 * report takes the same parameters.
 */
const SCOPED_ITEMS = `
  SELECT it.*, ${STATUS_AS_OF} AS status_as_of, coalesce(${NEXT_DUE}, it.due_column) AS due_on
    FROM (${ITEMS}) it
   WHERE ${inLabs('it.lab_id')} AND it.created_at <= $5 AND $3::timestamptz IS NOT NULL AND $4::timestamptz IS NOT NULL`;

export const INVENTORY_REGISTER_SQL = `
SELECT l.code AS "lab", s.item_kind AS "item_kind", s.asset_tag AS "asset_tag", s.item_type AS "item_type", s.size AS "size",
       s.status_as_of AS "status",
       coalesce(${iso('lc.performed_at')}, s.calibrated_on) AS "last_calibration",
       coalesce(lc.verdict, s.certificate) AS "last_calibration_result",
       ${iso('lk.performed_at')} AS "last_check_at",
       CASE WHEN lk.passed THEN 'pass' WHEN NOT lk.passed THEN 'fail' END AS "last_check_result",
       ${day('s.due_on')} AS "next_due_on",
       (s.due_on IS NOT NULL AND s.due_on < ${asOfDay('l')}) AS "overdue",
       s.id::text AS "item_id"
  FROM (${SCOPED_ITEMS}) s
  JOIN labs l ON l.id = s.lab_id
  LEFT JOIN LATERAL (
    SELECT c.performed_at, c.verdict FROM calibrations c
     WHERE s.item_kind = 'vessel' AND c.vessel_id = s.id AND c.created_at <= $5 AND c.submitted_at <= $5
       AND NOT (c.voided_at IS NOT NULL AND c.voided_at <= $5)
     ORDER BY c.performed_at DESC, c.id DESC LIMIT 1) lc ON true
  LEFT JOIN LATERAL (
    SELECT k.performed_at, k.passed FROM balance_checks k
     WHERE s.item_kind = 'balance' AND k.balance_id = s.id AND k.performed_at <= $5 AND k.created_at <= $5
     ORDER BY k.performed_at DESC, k.id DESC LIMIT 1) lk ON true
 ORDER BY l.code, s.item_kind, s.asset_tag, s.id`;

/** Item states per lab as of $5 (the PDF's chart). */
export const ITEM_STATES_SQL = `
SELECT l.code AS lab, s.status_as_of AS status, count(*)::int AS items
  FROM (${SCOPED_ITEMS}) s JOIN labs l ON l.id = s.lab_id
 GROUP BY l.code, s.status_as_of ORDER BY l.code, s.status_as_of`;

const CALIBRATION_STATE_AS_OF = `CASE
    WHEN c.voided_at IS NOT NULL AND c.voided_at <= $5 THEN 'voided'
    WHEN c.state = 'returned' AND c.reviewed_at <= $5 THEN 'returned'
    WHEN c.state IN ('approved', 'voided') AND c.reviewer_id IS NOT NULL AND c.reviewed_at <= $5 THEN 'approved'
    ELSE 'submitted' END`;

export const CALIBRATION_LOG_SQL = `
SELECT c.id::text AS "calibration_id", l.code AS "lab", v.asset_tag AS "vessel", v.kind AS "vessel_kind",
       v.nominal_volume_ml::text AS "nominal_volume_ml", v.accuracy_class AS "accuracy_class",
       ${iso('c.performed_at')} AS "performed_at", pp.email AS "performer", eb.email AS "entered_by",
       b.asset_tag AS "balance", t.asset_tag AS "thermometer",
       c.air_temperature_c::text AS "air_temperature_c", c.air_pressure_pa::text AS "air_pressure_pa",
       c.air_humidity_percent::text AS "air_humidity_percent", c.air_density_kg_per_m3::text AS "air_density_kg_per_m3",
       c.verdict AS "verdict", ${CALIBRATION_STATE_AS_OF} AS "state", ${iso('c.submitted_at')} AS "submitted_at",
       ${asOfOnly('c.reviewed_at', 'rv.email')} AS "reviewer", ${asOfOnly('c.reviewed_at', iso('c.reviewed_at'))} AS "reviewed_at",
       ${asOfOnly('c.reviewed_at', 'c.review_note')} AS "review_note", c.traceability_exception AS "traceability_exception",
       ${asOfOnly('c.voided_at', iso('c.voided_at'))} AS "voided_at", ${asOfOnly('c.voided_at', 'c.void_reason')} AS "void_reason",
       c.library_version AS "library_version", c.inputs::text AS "inputs", c.results::text AS "results"
  FROM calibrations c
  JOIN labs l ON l.id = c.lab_id
  JOIN vessels v ON v.id = c.vessel_id
  JOIN people pp ON pp.id = c.performer_id
  JOIN people eb ON eb.id = c.entered_by_id
  JOIN balances b ON b.id = c.balance_id
  JOIN instruments t ON t.id = c.thermometer_id
  LEFT JOIN people rv ON rv.id = c.reviewer_id
 WHERE ${inLabs('c.lab_id')} AND c.performed_at >= $3 AND c.performed_at < $4 AND c.created_at <= $5 AND c.submitted_at <= $5
 ORDER BY c.performed_at, c.id`;

export const FACTOR_REGISTER_SQL = `
SELECT f.id::text AS "factor_id", l.code AS "lab", p.email AS "person", p.display_name AS "person_name",
       v.asset_tag AS "vessel", v.kind AS "vessel_kind", f.kind AS "factor_kind", f.factor::text AS "factor",
       f.correction_ml::text AS "correction_ml", f.curve::text AS "curve",
       f.expanded_uncertainty_ml::text AS "expanded_uncertainty_ml", f.coverage_factor::text AS "coverage_factor",
       f.reference_temperature_c::text AS "reference_temperature_c",
       ${iso('f.valid_from')} AS "valid_from", ${iso('f.valid_until')} AS "valid_until",
       CASE WHEN f.ended_at <= $5 THEN f.state ELSE 'current' END AS "state",
       ${asOfOnly('f.ended_at', iso('f.ended_at'))} AS "ended_at",
       ${asOfOnly('f.ended_at', 'f.superseded_by_id::text')} AS "superseded_by",
       f.calibration_id::text AS "calibration_id", ${iso('c.performed_at')} AS "calibration_performed_at",
       ${asOfOnly('f.review_required_at', iso('f.review_required_at'))} AS "review_required_at",
       ${asOfOnly('f.review_required_at', 'f.review_reason')} AS "review_reason"
  FROM factors f
  JOIN labs l ON l.id = f.lab_id
  JOIN people p ON p.id = f.person_id
  JOIN vessels v ON v.id = f.vessel_id
  JOIN calibrations c ON c.id = f.calibration_id
 WHERE ${inLabs('f.lab_id')} AND f.created_at <= $5 AND f.valid_from < $4 AND f.valid_until > $3
 ORDER BY l.code, p.email, v.asset_tag, f.valid_from, f.id`;

export const BALANCE_CHECK_LOG_SQL = `
SELECT k.id::text AS "check_id", l.code AS "lab", b.asset_tag AS "balance", b.capacity_g::text AS "capacity_g",
       b.readability_g::text AS "readability_g", ${iso('k.performed_at')} AS "performed_at", p.email AS "performed_by",
       k.kind AS "kind", w.asset_tag AS "reference_weight", w.oiml_class AS "weight_class", k.passed AS "passed",
       k.minimum_weight_g::text AS "minimum_weight_g",
       (SELECT m.minimum_weight_g::text FROM balance_checks m
         WHERE m.balance_id = k.balance_id AND m.kind = 'usp41' AND m.passed AND m.minimum_weight_g IS NOT NULL
           AND m.created_at <= $5 AND (m.performed_at, m.id) <= (k.performed_at, k.id)
         ORDER BY m.performed_at DESC, m.id DESC LIMIT 1) AS "minimum_weight_in_force_g",
       k.library_version AS "library_version", k.notes AS "notes", k.inputs::text AS "inputs", k.results::text AS "results"
  FROM balance_checks k
  JOIN labs l ON l.id = k.lab_id
  JOIN balances b ON b.id = k.balance_id
  JOIN people p ON p.id = k.performed_by_id
  LEFT JOIN reference_weights w ON w.id = k.reference_weight_id
 WHERE ${inLabs('k.lab_id')} AND k.performed_at >= $3 AND k.performed_at < $4 AND k.created_at <= $5
 ORDER BY k.performed_at, k.id`;

export const AUDIT_TRAIL_SQL = `
SELECT a.seq::text AS "seq", ${isoMicro('a.occurred_at')} AS "occurred_at", a.actor_kind AS "actor_kind",
       a.actor_id::text AS "actor_id", coalesce(p.email, sc.name) AS "actor", a.action AS "action",
       a.entity_type AS "entity_type", a.entity_id AS "entity_id", l.code AS "lab", a.old_values::text AS "old_values",
       a.new_values::text AS "new_values", a.reason AS "reason", a.request_id AS "request_id",
       encode(a.prev_hash, 'hex') AS "prev_hash", encode(a.entry_hash, 'hex') AS "entry_hash"
  FROM audit_entries a
  LEFT JOIN labs l ON l.id = a.lab_id
  LEFT JOIN people p ON a.actor_kind = 'person' AND p.id = a.actor_id
  LEFT JOIN service_credentials sc ON a.actor_kind = 'credential' AND sc.id = a.actor_id
 WHERE ${inLabs('a.lab_id')} AND a.occurred_at >= $3 AND a.occurred_at < $4 AND a.occurred_at <= $5
 ORDER BY a.seq`;

/** Calibrations of the period on record at $5 and not voided by then. */
const PERIOD_CALIBRATIONS = `
  SELECT c.* FROM calibrations c
   WHERE ${inLabs('c.lab_id')} AND c.performed_at >= $3 AND c.performed_at < $4 AND c.created_at <= $5 AND c.submitted_at <= $5
     AND NOT (c.voided_at IS NOT NULL AND c.voided_at <= $5)`;

/**
 * Findings: work done under a traceability exception; an instrument or weight used after its due
 * date (the due date on record, compared with the day of the work in the lab's time zone); and
 * items overdue on the as-of day.
 */
export const OVERDUE_SUMMARY_SQL = `
WITH cal AS (${PERIOD_CALIBRATIONS}),
findings AS (
  SELECT c.lab_id, 'used-under-exception' AS finding, c.performed_at AS occurred, NULL::date AS due_on, NULL AS item_kind,
         NULL AS asset_tag, 'calibration' AS record_kind, c.id AS record_id, c.performer_id AS person_id,
         c.traceability_exception AS detail
    FROM cal c WHERE c.traceability_exception IS NOT NULL
  UNION ALL
  SELECT c.lab_id, 'used-while-overdue', c.performed_at, b.external_calibration_due, 'balance', b.asset_tag, 'calibration', c.id,
         c.performer_id, 'external calibration was due ' || ${day('b.external_calibration_due')}
    FROM cal c JOIN balances b ON b.id = c.balance_id JOIN labs l ON l.id = c.lab_id
   WHERE b.external_calibration_due < (c.performed_at AT TIME ZONE l.time_zone)::date
  UNION ALL
  SELECT c.lab_id, 'used-while-overdue', c.performed_at, t.calibration_due, 'instrument', t.asset_tag, 'calibration', c.id,
         c.performer_id, 'calibration was due ' || ${day('t.calibration_due')}
    FROM cal c JOIN instruments t ON t.id = c.thermometer_id JOIN labs l ON l.id = c.lab_id
   WHERE t.calibration_due < (c.performed_at AT TIME ZONE l.time_zone)::date
  UNION ALL
  SELECT k.lab_id, 'used-while-overdue', k.performed_at, w.certificate_due, 'reference-weight', w.asset_tag, 'balance-check', k.id,
         k.performed_by_id, 'certificate was due ' || ${day('w.certificate_due')}
    FROM balance_checks k JOIN reference_weights w ON w.id = k.reference_weight_id JOIN labs l ON l.id = k.lab_id
   WHERE ${inLabs('k.lab_id')} AND k.performed_at >= $3 AND k.performed_at < $4 AND k.created_at <= $5
     AND w.certificate_due < (k.performed_at AT TIME ZONE l.time_zone)::date
  UNION ALL
  SELECT s.lab_id, 'overdue-at-as-of', NULL, s.due_on, s.item_kind, s.asset_tag, NULL, NULL, NULL,
         'status ' || s.status_as_of
    FROM (${SCOPED_ITEMS}) s JOIN labs l ON l.id = s.lab_id
   WHERE s.status_as_of <> 'retired' AND s.due_on < ${asOfDay('l')}
  UNION ALL
  SELECT d.lab_id, 'overdue-at-as-of', NULL, d.due_on, 'factor', d.subject_label, 'factor', d.subject_id, d.person_id,
         'personal factor due for recalibration'
    FROM due_items d JOIN labs l ON l.id = d.lab_id JOIN factors f ON f.id = d.subject_id
   WHERE d.subject_kind = 'factor' AND ${inLabs('d.lab_id')} AND f.created_at <= $5
     AND NOT (f.ended_at IS NOT NULL AND f.ended_at <= $5) AND d.due_on < ${asOfDay('l')}
)
SELECT l.code AS "lab", f.finding AS "finding", ${iso('f.occurred')} AS "occurred_at", ${day('f.due_on')} AS "due_on",
       f.item_kind AS "item_kind", f.asset_tag AS "asset_tag", f.record_kind AS "record_kind", f.record_id::text AS "record_id",
       p.email AS "person", f.detail AS "detail"
  FROM findings f
  JOIN labs l ON l.id = f.lab_id
  LEFT JOIN people p ON p.id = f.person_id
 ORDER BY l.code, f.finding, f.occurred NULLS LAST, f.item_kind NULLS LAST, f.asset_tag NULLS LAST, f.record_id NULLS LAST`;
