import { Injectable } from '@nestjs/common';

import { AuditWriter } from '../audit/audit-writer';
import type { AuditContext } from '../auth/actor';
import { ImpactService } from '../impact/impact.service';
import type { ImpactView } from '../impact/impact.schemas';
import type { Tx } from '../inventory/inventory-workflow';

export interface VesselImpactResult {
  readonly vesselQuarantined: boolean;
  readonly review: ImpactView;
}

/**
 * What a failed calibration does to its vessel, inside the approval's
 * transaction: the vessel goes to quarantine when the lab says so (audited like
 * any status change, the reason naming the calibration), and every current
 * factor on it is marked for review through the shared impact service (every
 * calibration of the vessel on record is listed: a vessel has no "last known
 * good" moment common to all its users).
 */
@Injectable()
export class VesselImpact {
  constructor(
    private readonly audit: AuditWriter,
    private readonly impact: ImpactService,
  ) {}

  async afterFailedCalibration(
    tx: Tx,
    ctx: AuditContext,
    failed: { readonly calibrationId: string; readonly vesselId: string; readonly labId: string; readonly quarantine: boolean },
    now: Date,
  ): Promise<VesselImpactResult> {
    const reason = `Calibration ${failed.calibrationId} of this vessel failed its acceptance limit.`;
    const vesselQuarantined = failed.quarantine && (await this.quarantine(tx, ctx, failed, reason, now));
    const review = await this.impact.forVessel(tx, ctx, failed.vesselId, null, reason);
    return { vesselQuarantined, review };
  }

  /** An in-service vessel goes to quarantine; false when it was not in service. */
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
