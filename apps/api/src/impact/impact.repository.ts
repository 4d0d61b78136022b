import { Injectable } from '@nestjs/common';
import { Prisma } from '@registry/data';

import type { Tx } from '../inventory/inventory-workflow';

/** What was found out of tolerance, and the calibrations column that names it. */
export type ImpactSubjectKind = 'balance' | 'thermometer' | 'vessel';

const COLUMN: Readonly<Record<ImpactSubjectKind, string>> = {
  balance: 'balance_id',
  thermometer: 'thermometer_id',
  vessel: 'vessel_id',
};

export interface AffectedCalibration {
  readonly id: string;
  readonly labId: string;
  readonly vesselId: string;
  readonly vesselAssetTag: string;
  readonly performerId: string;
  readonly performerName: string;
  readonly performedAt: Date;
  readonly state: string;
}

export interface AffectedFactor {
  readonly id: string;
  readonly labId: string;
  readonly calibrationId: string;
  readonly personId: string;
  readonly vesselId: string;
  readonly reviewRequiredAt: Date | null;
  readonly reviewReason: string | null;
}

@Injectable()
export class ImpactRepository {
  /**
   * Calibrations that used the subject from `since` on (all of them when null), oldest first.
   * Voided calibrations yield no factor and are left out.
   */
  async calibrationsSince(tx: Tx, kind: ImpactSubjectKind, subjectId: string, since: Date | null): Promise<AffectedCalibration[]> {
    const column = Prisma.raw(`c.${COLUMN[kind]}`);
    const from = since === null ? Prisma.empty : Prisma.sql`AND c.performed_at >= ${since}`;
    return tx.$queryRaw<AffectedCalibration[]>`
      SELECT c.id, c.lab_id AS "labId", c.vessel_id AS "vesselId", v.asset_tag AS "vesselAssetTag",
             c.performer_id AS "performerId", p.display_name AS "performerName", c.performed_at AS "performedAt", c.state
        FROM calibrations c
        JOIN vessels v ON v.id = c.vessel_id
        JOIN people p ON p.id = c.performer_id
       WHERE ${column} = ${subjectId}::uuid AND c.state <> 'voided' ${from}
       ORDER BY c.performed_at, c.id`;
  }

  /** The current factors made from these calibrations, locked until the transaction ends. */
  async lockCurrentFactors(tx: Tx, calibrationIds: readonly string[]): Promise<AffectedFactor[]> {
    if (calibrationIds.length === 0) return [];
    return tx.$queryRaw<AffectedFactor[]>`
      SELECT id, lab_id AS "labId", calibration_id AS "calibrationId", person_id AS "personId", vessel_id AS "vesselId",
             review_required_at AS "reviewRequiredAt", review_reason AS "reviewReason"
        FROM factors
       WHERE calibration_id = ANY(${[...calibrationIds]}::uuid[]) AND state = 'current'
       ORDER BY id
         FOR UPDATE`;
  }

  /** Flags the factors not flagged yet; returns the ids it flagged. */
  async markForReview(tx: Tx, factorIds: readonly string[], at: Date, reason: string): Promise<string[]> {
    if (factorIds.length === 0) return [];
    const rows = await tx.$queryRaw<{ id: string }[]>`
      UPDATE factors SET review_required_at = ${at}, review_reason = ${reason}
       WHERE id = ANY(${[...factorIds]}::uuid[]) AND state = 'current' AND review_required_at IS NULL
      RETURNING id`;
    return rows.map((r) => r.id);
  }
}
