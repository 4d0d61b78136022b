import { Injectable } from '@nestjs/common';

import { AuditWriter } from '../audit/audit-writer';
import type { AuditContext } from '../auth/actor';
import type { Tx } from '../inventory/inventory-workflow';

export interface FactorMarkedForReview {
  readonly factorId: string;
  readonly personId: string;
  readonly reviewReason: string;
}

export interface VesselImpactResult {
  readonly vesselQuarantined: boolean;
  readonly factorsMarkedForReview: FactorMarkedForReview[];
}

/**
 * What a failed calibration does to its vessel, inside the approval's
 * transaction: the vessel goes to quarantine when the lab says so, and every
 * current factor on it is marked for review, each change audited with a reason
 * naming the calibration. (A small helper of our own: the impact lists of
 * balance checks live elsewhere.)
 */
@Injectable()
export class VesselImpact {
  constructor(private readonly audit: AuditWriter) {}

  async afterFailedCalibration(
    tx: Tx,
    ctx: AuditContext,
    failed: { readonly calibrationId: string; readonly vesselId: string; readonly labId: string; readonly quarantine: boolean },
    now: Date,
  ): Promise<VesselImpactResult> {
    const reason = `Calibration ${failed.calibrationId} of this vessel failed its acceptance limit.`;
    const vesselQuarantined = failed.quarantine && (await this.quarantine(tx, ctx, failed, reason, now));
    const flagged = await tx.factor.findMany({
      where: { vesselId: failed.vesselId, state: 'current' },
      select: { id: true, personId: true, labId: true, reviewRequiredAt: true, reviewReason: true },
      orderBy: { id: 'asc' },
    });
    if (flagged.length > 0) {
      await tx.factor.updateMany({
        where: { id: { in: flagged.map((f) => f.id) } },
        data: { reviewRequiredAt: now, reviewReason: reason },
      });
    }
    for (const f of flagged) {
      await this.audit.record(tx, ctx, {
        action: 'mark-for-review',
        entityType: 'factor',
        entityId: f.id,
        labId: f.labId,
        oldValues: { reviewRequiredAt: f.reviewRequiredAt, reviewReason: f.reviewReason },
        newValues: { reviewRequiredAt: now, reviewReason: reason },
        reason,
      });
    }
    return {
      vesselQuarantined,
      factorsMarkedForReview: flagged.map((f) => ({ factorId: f.id, personId: f.personId, reviewReason: reason })),
    };
  }

  /** An in-service vessel goes to quarantine (audited like any status change); false when it was not in service. */
  private async quarantine(tx: Tx, ctx: AuditContext, failed: { vesselId: string; labId: string }, reason: string, now: Date) {
    const { count } = await tx.vessel.updateMany({
      where: { id: failed.vesselId, status: 'in-service' },
      data: { status: 'quarantined', version: { increment: 1 }, updatedAt: now },
    });
    if (count === 0) return false;
    const { version } = await tx.vessel.findUniqueOrThrow({ where: { id: failed.vesselId }, select: { version: true } });
    await this.audit.record(tx, ctx, {
      action: 'update',
      entityType: 'vessel',
      entityId: failed.vesselId,
      labId: failed.labId,
      oldValues: { status: 'in-service', version: version - 1 },
      newValues: { status: 'quarantined', version },
      reason,
    });
    return true;
  }
}
