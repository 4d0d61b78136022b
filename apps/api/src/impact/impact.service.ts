import { Injectable } from '@nestjs/common';

import { toJson } from '../audit/audit-writer';
import type { AuditContext } from '../auth/actor';
import { Clock } from '../common/clock';
import type { Tx } from '../inventory/inventory-workflow';
import { type AffectedCalibration, type AffectedFactor, ImpactRepository, type ImpactSubjectKind } from './impact.repository';
import type { ImpactView } from './impact.schemas';

/** What a finding touches, read and locked, before anything is marked. */
export interface ImpactAssessment {
  readonly kind: ImpactSubjectKind;
  readonly subjectId: string;
  readonly since: Date | null;
  readonly calibrations: readonly AffectedCalibration[];
  readonly factors: readonly AffectedFactor[];
}

/**
 * The impact of a balance, thermometer or vessel found out of tolerance: the
 * calibrations that used it since it was last known good, and the current
 * factors made from them, which are marked for review (review_required_at and
 * review_reason, one audit entry each). Runs inside the caller's transaction,
 * so the finding, the marks and their audit entries commit together.
 *
 * A factor already marked by an earlier finding keeps its first mark and
 * reason (the trail holds both findings); it is listed with markedNow = false.
 */
@Injectable()
export class ImpactService {
  constructor(
    private readonly impacts: ImpactRepository,
    private readonly clock: Clock,
  ) {}

  /** A failed routine check: calibrations with the balance since its last passing check. */
  forBalance(tx: Tx, ctx: AuditContext, balanceId: string, since: Date | null, reason: string): Promise<ImpactView> {
    return this.apply(tx, ctx, 'balance', balanceId, since, reason);
  }

  /** An environment instrument found out of tolerance: calibrations that used it as thermometer since its last calibration. */
  forInstrument(tx: Tx, ctx: AuditContext, instrumentId: string, since: Date | null, reason: string): Promise<ImpactView> {
    return this.apply(tx, ctx, 'thermometer', instrumentId, since, reason);
  }

  /** A vessel that failed its calibration (or was found damaged): every person's calibrations of it since `since`. */
  forVessel(tx: Tx, ctx: AuditContext, vesselId: string, since: Date | null, reason: string): Promise<ImpactView> {
    return this.apply(tx, ctx, 'vessel', vesselId, since, reason);
  }

  /** Reads the affected calibrations and locks their current factors; marks nothing. */
  async assess(tx: Tx, kind: ImpactSubjectKind, subjectId: string, since: Date | null): Promise<ImpactAssessment> {
    const calibrations = await this.impacts.calibrationsSince(tx, kind, subjectId, since);
    const factors = await this.impacts.lockCurrentFactors(
      tx,
      calibrations.map((c) => c.id),
    );
    return { kind, subjectId, since, calibrations, factors };
  }

  /** The view of an assessment once marked at `at` (factors are locked, so this is what markForReview will do). */
  describe(assessment: ImpactAssessment, reason: string, at: Date, markedIds?: ReadonlySet<string>): ImpactView {
    const markedNow = (f: AffectedFactor) => (markedIds ? markedIds.has(f.id) : f.reviewRequiredAt === null);
    return {
      subject: { kind: assessment.kind, id: assessment.subjectId },
      since: assessment.since?.toISOString() ?? null,
      reason,
      calibrations: assessment.calibrations.map((c) => ({
        id: c.id,
        vessel: { id: c.vesselId, assetTag: c.vesselAssetTag },
        performer: { id: c.performerId, displayName: c.performerName },
        performedAt: c.performedAt.toISOString(),
        state: c.state,
      })),
      factors: assessment.factors.map((f) => {
        const now = markedNow(f);
        return {
          id: f.id,
          calibrationId: f.calibrationId,
          personId: f.personId,
          vesselId: f.vesselId,
          reviewRequiredAt: (now ? at : (f.reviewRequiredAt ?? at)).toISOString(),
          reviewReason: now ? reason : (f.reviewReason ?? reason),
          markedNow: now,
        };
      }),
    };
  }

  /** Marks the assessed factors that are not marked yet, with one audit entry each, and returns the view. */
  async markForReview(tx: Tx, ctx: AuditContext, assessment: ImpactAssessment, reason: string, at: Date): Promise<ImpactView> {
    const open = assessment.factors.filter((f) => f.reviewRequiredAt === null);
    const marked = new Set(
      await this.impacts.markForReview(
        tx,
        open.map((f) => f.id),
        at,
        reason,
      ),
    );
    await this.auditMarks(
      tx,
      ctx,
      open.filter((f) => marked.has(f.id)),
      reason,
      at,
    );
    return this.describe(assessment, reason, at, marked);
  }

  private async apply(
    tx: Tx,
    ctx: AuditContext,
    kind: ImpactSubjectKind,
    subjectId: string,
    since: Date | null,
    reason: string,
  ): Promise<ImpactView> {
    const assessment = await this.assess(tx, kind, subjectId, since);
    return this.markForReview(tx, ctx, assessment, reason, this.clock.now());
  }

  /** One 'mark-for-review' entry per factor, appended in one statement (the chain trigger still runs per row, in order). */
  private async auditMarks(tx: Tx, ctx: AuditContext, factors: readonly AffectedFactor[], reason: string, at: Date): Promise<void> {
    if (factors.length === 0) return;
    const actorId = ctx.actor.kind === 'person' || ctx.actor.kind === 'credential' ? ctx.actor.id : null;
    const oldValues = factors.map(() => toJson({ reviewRequiredAt: null, reviewReason: null }));
    const newValues = factors.map((f) =>
      toJson({ calibrationId: f.calibrationId, reviewRequiredAt: at.toISOString(), reviewReason: reason }),
    );
    await tx.$executeRaw`
      INSERT INTO audit_entries (actor_kind, actor_id, action, entity_type, entity_id, lab_id, old_values, new_values, reason, request_id, entry_hash)
      SELECT ${ctx.actor.kind}, ${actorId}::uuid, 'mark-for-review', 'factor', u.entity_id, u.lab_id, u.old_values::jsonb,
             u.new_values::jsonb, ${reason}, ${ctx.requestId}, '\\x'::bytea
        FROM unnest(${factors.map((f) => f.id)}::text[], ${factors.map((f) => f.labId)}::uuid[], ${oldValues}::text[], ${newValues}::text[])
             WITH ORDINALITY AS u(entity_id, lab_id, old_values, new_values, n)
       ORDER BY u.n`;
  }
}
