import { Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import type { RequestContext } from '../auth/actor';
import { Clock } from '../common/clock';
import { expectedVersion, staleVersion } from '../common/http/concurrency';
import { DomainError } from '../common/problem/domain-error';
import { presentCalibration } from './calibration.presenter';
import { CalibrationRepository } from './calibration.repository';
import type { CalibrationView, Violation } from './calibration.responses';
import type { SubmitCalibration } from './calibration.schemas';
import { auditSnapshot, TX } from './calibration.service';
import { assertCanEdit, assertState, notFound } from './calibration-access';
import { computeCalibration } from './calibration-computation';
import { CalibrationFactsRepository, type LabPolicy } from './calibration-facts.repository';
import { checkedInputs } from './calibration-inputs';
import { CalibrationItems, subjectOf } from './calibration-items';
import { traceabilityViolations } from './traceability';

/**
 * Submission: the traceability rules are checked as of the performance time,
 * every point is computed by the metrology library, and inputs, results,
 * verdict and library version are frozen together (the database refuses any
 * later change to them).
 */
@Injectable()
export class CalibrationSubmission {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly calibrations: CalibrationRepository,
    private readonly facts: CalibrationFactsRepository,
    private readonly items: CalibrationItems,
    private readonly audit: AuditWriter,
    private readonly clock: Clock,
  ) {}

  async submit(ctx: RequestContext, id: string, ifMatch: string | undefined, body: SubmitCalibration): Promise<CalibrationView> {
    return this.prisma.$transaction(async (tx) => {
      const cal = await this.calibrations.findById(tx, id);
      if (!cal) throw notFound();
      assertCanEdit(ctx.actor, cal);
      const expected = expectedVersion(ifMatch);
      if (expected !== cal.version) throw staleVersion(cal.version);
      assertState(cal, ['draft', 'returned'], 'submitted');
      const policy = await this.facts.policyOf(tx, cal.labId);
      const vessel = await this.items.existingVessel(tx, cal.vesselId);
      if (vessel.deliveryMode !== cal.deliveryMode) {
        throw new DomainError(
          'invalid-state',
          `The vessel is now adjusted to ${vessel.deliveryMode}, the readings were entered to ${cal.deliveryMode}: void this record and enter a new one.`,
          undefined,
          { state: cal.state },
        );
      }
      const { balance, thermometer } = await this.items.instrumentsOf(tx, cal.labId, cal.balanceId, cal.thermometerId);
      const violations = traceabilityViolations({
        performedAt: cal.performedAt,
        timeZone: policy.timeZone,
        checkWindowDays: policy.balanceCheckWindowDays,
        vessel,
        balance,
        latestCheck: await this.facts.latestBalanceCheck(tx, balance.id, cal.performedAt),
        thermometer,
      });
      const exceptionReason = acceptedException(violations, policy, body.exceptionReason);
      const now = this.clock.now();
      // The vessel may have changed since the draft was written: check the points against it again.
      const inputs = checkedInputs(cal.inputs, vessel);
      const computed = computeCalibration(inputs, subjectOf(vessel, balance, cal.deliveryMode), now);
      const results = { ...computed, traceability: { checkedAt: now.toISOString(), violations, exceptionReason } };
      const submitted = await this.calibrations.transition(
        tx,
        id,
        expected,
        ['draft', 'returned'],
        {
          state: 'submitted',
          results,
          verdict: computed.verdict,
          libraryVersion: computed.libraryVersion,
          submittedAt: now,
          traceabilityException: exceptionReason,
        },
        now,
      );
      if (!submitted) throw staleVersion();
      await this.audit.record(tx, ctx, {
        action: 'submit',
        entityType: 'calibration',
        entityId: id,
        labId: cal.labId,
        oldValues: { state: cal.state, version: cal.version },
        newValues: { ...auditSnapshot(submitted), verdict: submitted.verdict, libraryVersion: submitted.libraryVersion, results },
        reason: exceptionReason,
      });
      return presentCalibration(submitted, null);
    }, TX);
  }
}

/**
 * With no violation there is nothing to accept (a reason sent anyway is not recorded). With
 * violations, the submission goes through only when the lab allows exceptions, a reason is
 * given and every violation may be excepted; otherwise 422 listing each rule broken.
 */
function acceptedException(violations: Violation[], policy: LabPolicy, reason: string | undefined): string | null {
  if (violations.length === 0) return null;
  const excusable = policy.allowTraceabilityExceptions && violations.every((v) => v.exceptionAllowed);
  if (excusable && reason !== undefined) return reason;
  const how = !policy.allowTraceabilityExceptions
    ? 'This lab does not accept exceptions.'
    : !violations.every((v) => v.exceptionAllowed)
      ? 'At least one of them cannot be accepted by exception.'
      : 'This lab accepts an exception when you give exceptionReason.';
  throw new DomainError(
    'traceability-violation',
    `${violations.length} traceability rule(s) broken: ${violations.map((v) => v.rule).join(', ')}. ${how}`,
    undefined,
    { violations, exceptionPossible: excusable },
  );
}
