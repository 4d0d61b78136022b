import { Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import type { RequestContext } from '../auth/actor';
import { Clock } from '../common/clock';
import { expectedVersion, staleVersion } from '../common/http/concurrency';
import type { Tx } from '../inventory/inventory-workflow';
import { type ApprovedCalibration, FactorIssuer } from '../factors/factor-issuer';
import { presentCalibration } from './calibration.presenter';
import { type CalibrationRecord, CalibrationRepository } from './calibration.repository';
import type { ApprovalView, CalibrationView, VoidedView } from './calibration.responses';
import type { CalibrationState } from './calibration.schemas';
import { TX } from './calibration.service';
import { assertCanReview, assertCanVoid, assertFourEyes, assertState, notFound } from './calibration-access';
import { CalibrationFactsRepository } from './calibration-facts.repository';
import { VesselImpact } from './vessel-impact';

const NO_IMPACT = { vesselQuarantined: false, review: null } as const;

/**
 * Review and void. Approval of a passing (or no-limit) calibration issues the
 * performer's factor in the same transaction; a failed one issues none, marks
 * the vessel's current factors for review and, where the lab says so, puts the
 * vessel in quarantine. Voiding an approved calibration withdraws its factor.
 */
@Injectable()
export class CalibrationReview {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly calibrations: CalibrationRepository,
    private readonly facts: CalibrationFactsRepository,
    private readonly factors: FactorIssuer,
    private readonly impact: VesselImpact,
    private readonly audit: AuditWriter,
    private readonly clock: Clock,
  ) {}

  async approve(ctx: RequestContext, id: string, ifMatch: string | undefined, note: string | undefined): Promise<ApprovalView> {
    return this.prisma.$transaction(async (tx) => {
      const { cal, policy, expected } = await this.reviewable(tx, ctx, id, ifMatch, 'approved');
      const now = this.clock.now();
      const approved = await this.move(tx, cal, expected, {
        state: 'approved',
        reviewerId: ctx.actor.id,
        reviewedAt: now,
        reviewNote: note ?? null,
      });
      const issued =
        approved.verdict === 'fail' ? null : await this.factors.issue(tx, ctx, toApproved(approved), policy.factorValidityDays);
      const impact =
        approved.verdict === 'fail'
          ? await this.impact.afterFailedCalibration(
              tx,
              ctx,
              { calibrationId: id, vesselId: cal.vesselId, labId: cal.labId, quarantine: policy.quarantineOnFailedCalibration },
              now,
            )
          : NO_IMPACT;
      await this.audit.record(tx, ctx, {
        action: 'approve',
        entityType: 'calibration',
        entityId: id,
        labId: cal.labId,
        oldValues: { state: cal.state, version: cal.version },
        newValues: {
          state: approved.state,
          verdict: approved.verdict,
          reviewerId: approved.reviewerId,
          factorId: issued?.factorId ?? null,
          vesselQuarantined: impact.vesselQuarantined,
          version: approved.version,
        },
        reason: note ?? null,
      });
      const factor = issued && { id: issued.factorId, state: issued.current ? ('current' as const) : ('superseded' as const) };
      return {
        ...presentCalibration(approved, factor),
        impact: {
          factor: issued && { id: issued.factorId, current: issued.current, supersededFactorId: issued.supersededId },
          ...impact,
        },
      };
    }, TX);
  }

  async sendBack(ctx: RequestContext, id: string, ifMatch: string | undefined, note: string): Promise<CalibrationView> {
    return this.prisma.$transaction(async (tx) => {
      const { cal, expected } = await this.reviewable(tx, ctx, id, ifMatch, 'returned');
      const returned = await this.move(tx, cal, expected, {
        state: 'returned',
        reviewerId: ctx.actor.id,
        reviewedAt: this.clock.now(),
        reviewNote: note,
      });
      await this.audit.record(tx, ctx, {
        action: 'return',
        entityType: 'calibration',
        entityId: id,
        labId: cal.labId,
        oldValues: { state: cal.state, version: cal.version },
        newValues: { state: returned.state, reviewerId: returned.reviewerId, version: returned.version },
        reason: note,
      });
      return presentCalibration(returned, null);
    }, TX);
  }

  async void(ctx: RequestContext, id: string, ifMatch: string | undefined, reason: string): Promise<VoidedView> {
    return this.prisma.$transaction(async (tx) => {
      const cal = await this.calibrations.findById(tx, id);
      if (!cal) throw notFound();
      assertCanVoid(ctx.actor, cal);
      const expected = expectedVersion(ifMatch);
      if (expected !== cal.version) throw staleVersion(cal.version);
      assertState(cal, ['draft', 'returned', 'submitted', 'approved'], 'voided');
      const voided = await this.move(tx, cal, expected, {
        state: 'voided',
        voidedById: ctx.actor.id,
        voidedAt: this.clock.now(),
        voidReason: reason,
      });
      const withdrawn =
        cal.state === 'approved' ? await this.factors.withdrawForCalibration(tx, ctx, id, `Calibration ${id} voided: ${reason}`) : null;
      await this.audit.record(tx, ctx, {
        action: 'void',
        entityType: 'calibration',
        entityId: id,
        labId: cal.labId,
        oldValues: { state: cal.state, version: cal.version },
        newValues: { state: voided.state, voidedById: voided.voidedById, withdrawnFactorId: withdrawn, version: voided.version },
        reason,
      });
      const factors = await this.calibrations.factorsOf(tx, [id]);
      return { ...presentCalibration(voided, factors.get(id) ?? null), withdrawnFactorId: withdrawn };
    }, TX);
  }

  /** A submitted calibration the actor may review, under the lab's four-eyes rule, at the version sent. */
  private async reviewable(tx: Tx, ctx: RequestContext, id: string, ifMatch: string | undefined, action: string) {
    const cal = await this.calibrations.findById(tx, id);
    if (!cal) throw notFound();
    assertCanReview(ctx.actor, cal);
    const expected = expectedVersion(ifMatch);
    if (expected !== cal.version) throw staleVersion(cal.version);
    assertState(cal, ['submitted'], action);
    const policy = await this.facts.policyOf(tx, cal.labId);
    assertFourEyes(ctx.actor, cal, policy.fourEyesRequired);
    return { cal, policy, expected };
  }

  private async move(
    tx: Tx,
    cal: CalibrationRecord,
    expected: number,
    change: Parameters<CalibrationRepository['transition']>[4],
  ): Promise<CalibrationRecord> {
    const from: CalibrationState[] = [cal.state];
    const moved = await this.calibrations.transition(tx, cal.id, expected, from, change, this.clock.now());
    if (!moved) throw staleVersion();
    return moved;
  }
}

/** What the factor needs from an approved calibration: each point's mean volume and uncertainty. */
function toApproved(cal: CalibrationRecord): ApprovedCalibration {
  const points = cal.results?.points ?? [];
  return {
    id: cal.id,
    labId: cal.labId,
    vesselId: cal.vesselId,
    performerId: cal.performerId,
    performedAt: cal.performedAt,
    points: points.map((p) => ({
      nominalVolumeMl: p.nominalVolumeMl,
      meanVolumeMl: p.meanVolumeMl,
      expandedUncertaintyMl: p.expandedUncertaintyMl,
      coverageFactor: p.coverageFactor,
    })),
    referenceTemperatureC: points[0]?.referenceTemperatureC ?? '20',
  };
}
