import {
  AUDIT_TRAIL_SQL,
  BALANCE_CHECK_LOG_SQL,
  CALIBRATION_LOG_SQL,
  FACTOR_REGISTER_SQL,
  INVENTORY_REGISTER_SQL,
  OVERDUE_SUMMARY_SQL,
} from './report-sql';
import type { ReportKind } from './export.schemas';

/**
 * One column of a report: its name (the CSV header and the NDJSON member), how NDJSON writes it
 * (text as a JSON string, boolean as true/false, json as the stored JSON itself) and, for the
 * columns the PDF table shows, the share of the table width.
 */
export interface ReportColumn {
  readonly name: string;
  readonly type: 'text' | 'boolean' | 'json';
  readonly pdf?: { readonly label: string; readonly width: number };
}

export interface ReportDefinition {
  readonly kind: ReportKind;
  readonly title: string;
  readonly description: string;
  readonly sql: string;
  readonly columns: readonly ReportColumn[];
}

const text = (name: string, pdf?: [label: string, width: number]): ReportColumn => ({
  name,
  type: 'text',
  ...(pdf ? { pdf: { label: pdf[0], width: pdf[1] } } : {}),
});
const bool = (name: string, pdf?: [label: string, width: number]): ReportColumn => ({ ...text(name, pdf), type: 'boolean' });
const json = (name: string): ReportColumn => ({ name, type: 'json' });

export const REPORTS: Readonly<Record<ReportKind, ReportDefinition>> = {
  'inventory-register': {
    kind: 'inventory-register',
    title: 'Inventory status register',
    description: 'Every item with its status as of the as-of instant, its last calibration or check, next due date and overdue flag.',
    sql: INVENTORY_REGISTER_SQL,
    columns: [
      text('lab', ['Lab', 6]),
      text('item_kind', ['Item', 9]),
      text('asset_tag', ['Asset tag', 11]),
      text('item_type', ['Type', 11]),
      text('size', ['Size', 10]),
      text('status', ['Status', 8]),
      text('last_calibration', ['Last calibration', 12]),
      text('last_calibration_result', ['Result', 7]),
      text('last_check_at', ['Last check', 12]),
      text('last_check_result', ['Check', 5]),
      text('next_due_on', ['Next due', 7]),
      bool('overdue', ['Overdue', 5]),
      text('item_id'),
    ],
  },
  'calibration-log': {
    kind: 'calibration-log',
    title: 'Calibration log',
    description: 'Calibrations performed in the period and submitted by the as-of instant, with inputs, results, verdict and review.',
    sql: CALIBRATION_LOG_SQL,
    columns: [
      text('calibration_id'),
      text('lab', ['Lab', 6]),
      text('vessel', ['Vessel', 11]),
      text('vessel_kind'),
      text('nominal_volume_ml', ['Nominal mL', 7]),
      text('accuracy_class'),
      text('performed_at', ['Performed', 13]),
      text('performer', ['Performer', 17]),
      text('entered_by'),
      text('balance', ['Balance', 8]),
      text('thermometer', ['Thermometer', 8]),
      text('air_temperature_c'),
      text('air_pressure_pa'),
      text('air_humidity_percent'),
      text('air_density_kg_per_m3'),
      text('verdict', ['Verdict', 6]),
      text('state', ['State', 7]),
      text('submitted_at'),
      text('reviewer', ['Reviewer', 17]),
      text('reviewed_at'),
      text('review_note'),
      text('traceability_exception'),
      text('voided_at'),
      text('void_reason'),
      text('library_version'),
      json('inputs'),
      json('results'),
    ],
  },
  'factor-register': {
    kind: 'factor-register',
    title: 'Personal factor register',
    description: 'Personal factors valid during the period and recorded by the as-of instant, with their superseded history.',
    sql: FACTOR_REGISTER_SQL,
    columns: [
      text('factor_id'),
      text('lab', ['Lab', 6]),
      text('person', ['Person', 16]),
      text('person_name'),
      text('vessel', ['Vessel', 10]),
      text('vessel_kind'),
      text('factor_kind', ['Kind', 5]),
      text('factor', ['Factor', 10]),
      text('correction_ml', ['Corr. mL', 7]),
      json('curve'),
      text('expanded_uncertainty_ml', ['U mL', 7]),
      text('coverage_factor', ['k', 4]),
      text('reference_temperature_c'),
      text('valid_from', ['Valid from', 12]),
      text('valid_until', ['Valid until', 12]),
      text('state', ['State', 8]),
      text('ended_at'),
      text('superseded_by'),
      text('calibration_id'),
      text('calibration_performed_at'),
      text('review_required_at'),
      text('review_reason'),
    ],
  },
  'balance-check-log': {
    kind: 'balance-check-log',
    title: 'Balance check log',
    description: 'Routine balance checks performed in the period, with the minimum weight each determined and the one in force.',
    sql: BALANCE_CHECK_LOG_SQL,
    columns: [
      text('check_id'),
      text('lab', ['Lab', 6]),
      text('balance', ['Balance', 10]),
      text('capacity_g'),
      text('readability_g', ['d g', 7]),
      text('performed_at', ['Performed', 13]),
      text('performed_by', ['By', 17]),
      text('kind', ['Kind', 8]),
      text('reference_weight', ['Weight', 10]),
      text('weight_class'),
      bool('passed', ['Passed', 5]),
      text('minimum_weight_g', ['Min. weight g', 9]),
      text('minimum_weight_in_force_g', ['In force g', 9]),
      text('library_version'),
      text('notes'),
      json('inputs'),
      json('results'),
    ],
  },
  'audit-trail': {
    kind: 'audit-trail',
    title: 'Audit trail extract',
    description: 'Audit entries of the period up to the as-of instant, with the verification of the hash chain up to that instant.',
    sql: AUDIT_TRAIL_SQL,
    columns: [
      text('seq', ['Seq', 5]),
      text('occurred_at', ['Occurred', 15]),
      text('actor_kind'),
      text('actor_id'),
      text('actor', ['Actor', 16]),
      text('action', ['Action', 9]),
      text('entity_type', ['Entity', 10]),
      text('entity_id', ['Entity id', 14]),
      text('lab', ['Lab', 6]),
      json('old_values'),
      json('new_values'),
      text('reason'),
      text('request_id'),
      text('prev_hash'),
      text('entry_hash', ['Entry hash', 14]),
    ],
  },
  'overdue-summary': {
    kind: 'overdue-summary',
    title: 'Overdue and exceptions summary',
    description:
      'Work in the period done under a traceability exception or with an item past its due date, and by whom; items overdue on the as-of day.',
    sql: OVERDUE_SUMMARY_SQL,
    columns: [
      text('lab', ['Lab', 6]),
      text('finding', ['Finding', 12]),
      text('occurred_at', ['Occurred', 12]),
      text('due_on', ['Due', 7]),
      text('item_kind', ['Item', 9]),
      text('asset_tag', ['Asset tag', 10]),
      text('record_kind', ['Record', 8]),
      text('record_id'),
      text('person', ['By', 15]),
      text('detail', ['Detail', 21]),
    ],
  },
};
