import { Injectable } from '@nestjs/common';
import { Pool } from 'pg';

import type { CurvePoint } from './factor-correction';
import type { FactorState } from './factor.schemas';

export type PersonKey = { readonly by: 'id' | 'email' | 'externalRef'; readonly value: string };
export type VesselKey = { readonly by: 'id' | 'assetTag'; readonly value: string };

/** The factor found for a person and vessel (values as stored: decimal strings). */
export interface LookedUpFactor {
  readonly id: string;
  readonly labId: string;
  readonly calibrationId: string;
  readonly kind: 'single' | 'curve';
  readonly factor: string | null;
  readonly correctionMl: string | null;
  readonly curve: readonly CurvePoint[] | null;
  readonly expandedUncertaintyMl: string;
  readonly coverageFactor: string;
  readonly referenceTemperatureC: string;
  readonly validFrom: Date;
  readonly validUntil: Date;
  readonly state: FactorState;
  readonly reviewRequiredAt: Date | null;
  readonly reviewReason: string | null;
}

/** Everything the factor service decides on, from one query. */
export interface Lookup {
  readonly vessel: {
    readonly id: string;
    readonly labId: string;
    readonly kind: string;
    readonly status: 'in-service' | 'quarantined' | 'retired';
    readonly nominalVolumeMl: string;
    readonly expansionCoefficientPerK: string;
    readonly limitMl: string | null;
  };
  /** The person the identifier names, when it names anyone (for externalRef: a member of the vessel's lab). */
  readonly personId: string | null;
  /** False when the person named is disabled. */
  readonly personActive: boolean;
  readonly isMember: boolean;
  readonly factor: LookedUpFactor | null;
}

const PERSON_JOINS = {
  id: `LEFT JOIN people p ON p.id = $1
       LEFT JOIN lab_memberships m ON m.lab_id = v.lab_id AND m.person_id = p.id`,
  email: `LEFT JOIN people p ON p.email = $1
          LEFT JOIN lab_memberships m ON m.lab_id = v.lab_id AND m.person_id = p.id`,
  // External references are the lab's own: unique per lab, looked up in the vessel's lab.
  externalRef: `LEFT JOIN lab_memberships m ON m.lab_id = v.lab_id AND m.external_ref = $1
                LEFT JOIN people p ON p.id = m.person_id`,
} as const;

const VESSEL_WHERE = { id: 'v.id = $2', assetTag: 'v.asset_tag = $2' } as const;

/**
 * The current factor is the one row of the partial unique index; the factor in
 * force at an instant is the one that was current then: issued by then and not
 * ended before it (a factor superseded at S was in force until S), and valid from
 * before it. The caller checks valid_until.
 */
const FACTOR_WHERE = {
  current: `f.state = 'current'`,
  at: `f.created_at <= $3 AND f.valid_from <= $3 AND (f.ended_at IS NULL OR f.ended_at > $3)`,
} as const;

function statement(person: PersonKey['by'], vessel: VesselKey['by'], when: keyof typeof FACTOR_WHERE): string {
  return `SELECT v.id AS vessel_id, v.lab_id, v.kind AS vessel_kind, v.status AS vessel_status,
                 v.nominal_volume_ml, v.expansion_coefficient_per_k, v.limit_ml,
                 p.id AS person_id, (p.status = 'active') AS person_active, (m.person_id IS NOT NULL) AS is_member,
                 f.id AS factor_id, f.lab_id AS factor_lab_id, f.calibration_id, f.kind, f.factor, f.correction_ml, f.curve,
                 f.expanded_uncertainty_ml, f.coverage_factor, f.reference_temperature_c,
                 f.valid_from, f.valid_until, f.state, f.review_required_at, f.review_reason
            FROM vessels v
            ${PERSON_JOINS[person]}
            LEFT JOIN LATERAL (
              SELECT * FROM factors f
               WHERE f.person_id = p.id AND f.vessel_id = v.id AND ${FACTOR_WHERE[when]}
               ORDER BY f.created_at DESC
               LIMIT 1
            ) f ON true
           WHERE ${VESSEL_WHERE[vessel]}`;
}

/** Every variant, built once: named statements are parsed and planned once per connection. */
const STATEMENTS = new Map<string, { name: string; text: string }>();
for (const person of ['id', 'email', 'externalRef'] as const) {
  for (const vessel of ['id', 'assetTag'] as const) {
    for (const when of ['current', 'at'] as const) {
      const name = `factor-lookup-${person}-${vessel}-${when}`;
      STATEMENTS.set(name, { name, text: statement(person, vessel, when) });
    }
  }
}

interface Row {
  vessel_id: string;
  lab_id: string;
  vessel_kind: string;
  vessel_status: Lookup['vessel']['status'];
  nominal_volume_ml: string;
  expansion_coefficient_per_k: string;
  limit_ml: string | null;
  person_id: string | null;
  person_active: boolean | null;
  is_member: boolean;
  factor_id: string | null;
  factor_lab_id: string;
  calibration_id: string;
  kind: 'single' | 'curve';
  factor: string | null;
  correction_ml: string | null;
  curve: CurvePoint[] | null;
  expanded_uncertainty_ml: string;
  coverage_factor: string;
  reference_temperature_c: string;
  valid_from: Date;
  valid_until: Date;
  state: FactorState;
  review_required_at: Date | null;
  review_reason: string | null;
}

/**
 * The hot path of the factor service: vessel, person, membership and factor in ONE
 * indexed query through the pg pool (no ORM on this path). Indexes: vessels_pkey or
 * vessels_asset_tag_key; people_pkey or people_email_key; lab_memberships_pkey or
 * lab_memberships_external_ref_key; factors_one_current_key (current) or
 * factors_person_vessel_validity_idx (at an instant).
 */
@Injectable()
export class FactorLookupRepository {
  constructor(private readonly pool: Pool) {}

  /** The statement a lookup runs (also used by the test that checks its plan). */
  static statementFor(person: PersonKey['by'], vessel: VesselKey['by'], at: boolean): { name: string; text: string } {
    return STATEMENTS.get(`factor-lookup-${person}-${vessel}-${at ? 'at' : 'current'}`) as { name: string; text: string };
  }

  async find(person: PersonKey, vessel: VesselKey, at: Date | null): Promise<Lookup | null> {
    const { name, text } = FactorLookupRepository.statementFor(person.by, vessel.by, at !== null);
    const values: unknown[] = at ? [person.value, vessel.value, at] : [person.value, vessel.value];
    const { rows } = await this.pool.query<Row>({ name, text, values });
    const r = rows[0];
    if (!r) return null;
    return {
      vessel: {
        id: r.vessel_id,
        labId: r.lab_id,
        kind: r.vessel_kind,
        status: r.vessel_status,
        nominalVolumeMl: r.nominal_volume_ml,
        expansionCoefficientPerK: r.expansion_coefficient_per_k,
        limitMl: r.limit_ml,
      },
      personId: r.person_id,
      personActive: r.person_active === true,
      isMember: r.is_member,
      factor: r.factor_id
        ? {
            id: r.factor_id,
            labId: r.factor_lab_id,
            calibrationId: r.calibration_id,
            kind: r.kind,
            factor: r.factor,
            correctionMl: r.correction_ml,
            curve: r.curve,
            expandedUncertaintyMl: r.expanded_uncertainty_ml,
            coverageFactor: r.coverage_factor,
            referenceTemperatureC: r.reference_temperature_c,
            validFrom: r.valid_from,
            validUntil: r.valid_until,
            state: r.state,
            reviewRequiredAt: r.review_required_at,
            reviewReason: r.review_reason,
          }
        : null,
    };
  }
}
