import { Injectable } from '@nestjs/common';
import type { Prisma } from '@registry/data';
import { Decimal } from '@registry/metrology';

import { AuditWriter } from '../audit/audit-writer';
import type { AuditContext } from '../auth/actor';
import { Clock } from '../common/clock';

/** One calibrated point of an approved calibration, as the factor needs it. */
export interface CalibratedPoint {
  /** The volume the point was tested at (the nominal volume for one-mark ware). */
  readonly nominalVolumeMl: string;
  /** Mean volume at the reference temperature. */
  readonly meanVolumeMl: string;
  readonly expandedUncertaintyMl: string;
  readonly coverageFactor: string;
}

export interface ApprovedCalibration {
  readonly id: string;
  readonly labId: string;
  readonly vesselId: string;
  readonly performerId: string;
  readonly performedAt: Date;
  /** One point for one-mark ware; two or more for graduated ware (a curve). */
  readonly points: readonly CalibratedPoint[];
  readonly referenceTemperatureC?: string;
}

export interface IssuedFactor {
  readonly factorId: string;
  /** The factor it replaced as current, if any. */
  readonly supersededId: string | null;
  /** False when a newer calibration's factor is already current: this one goes straight to history. */
  readonly current: boolean;
}

const DAY_MS = 86_400_000;

/**
 * Turns an approved calibration into the performer's factor for that vessel,
 * inside the approval's transaction. Approvals for the same person and vessel
 * are serialised by an advisory lock; the newest calibration (by performance
 * time) stays current whatever the order of approval, and the one it replaces
 * is kept as history.
 */
@Injectable()
export class FactorIssuer {
  constructor(
    private readonly audit: AuditWriter,
    private readonly clock: Clock,
  ) {}

  async issue(tx: Prisma.TransactionClient, ctx: AuditContext, cal: ApprovedCalibration, validityDays: number): Promise<IssuedFactor> {
    await tx.$executeRaw`SELECT pg_advisory_xact_lock(hashtextextended(${`factor:${cal.performerId}:${cal.vesselId}`}, 0))`;
    const current = await tx.factor.findFirst({ where: { personId: cal.performerId, vesselId: cal.vesselId, state: 'current' } });
    const becomesCurrent = !current || current.validFrom.getTime() <= cal.performedAt.getTime();
    const now = this.clock.now();
    const values = factorValues(cal.points);
    // A failed check or an out-of-tolerance finding being recorded now holds its balance or thermometer row
    // (FOR UPDATE): waiting for it here means either its impact sees this factor or this approval sees it.
    await tx.$queryRaw`SELECT 1 FROM calibrations c JOIN balances b ON b.id = c.balance_id JOIN instruments i ON i.id = c.thermometer_id
                        WHERE c.id = ${cal.id}::uuid FOR SHARE OF b, i`;
    const review = (await laterFailedCheck(tx, cal)) ?? (await laterThermometerFinding(tx, cal));
    // The old factor stops being current before the new one is written: the
    // one-current-factor index is checked row by row and cannot wait for commit.
    if (becomesCurrent && current) {
      await tx.factor.update({ where: { id: current.id }, data: { state: 'superseded', endedAt: now } });
    }
    const created = await tx.factor.create({
      data: {
        labId: cal.labId,
        personId: cal.performerId,
        vesselId: cal.vesselId,
        calibrationId: cal.id,
        ...values,
        referenceTemperatureC: cal.referenceTemperatureC ?? '20',
        validFrom: cal.performedAt,
        validUntil: new Date(cal.performedAt.getTime() + validityDays * DAY_MS),
        state: becomesCurrent ? 'current' : 'superseded',
        endedAt: becomesCurrent ? null : now,
        supersededById: becomesCurrent ? null : (current?.id ?? null),
        ...(review ? { reviewRequiredAt: now, reviewReason: review } : {}),
      },
    });
    if (becomesCurrent && current) {
      await tx.factor.update({ where: { id: current.id }, data: { supersededById: created.id } });
      await this.audit.record(tx, ctx, {
        action: 'supersede',
        entityType: 'factor',
        entityId: current.id,
        labId: cal.labId,
        oldValues: { state: 'current' },
        newValues: { state: 'superseded', supersededById: created.id },
      });
    }
    await this.audit.record(tx, ctx, {
      action: 'create',
      entityType: 'factor',
      entityId: created.id,
      labId: cal.labId,
      newValues: created,
    });
    return { factorId: created.id, supersededId: becomesCurrent ? (current?.id ?? null) : null, current: becomesCurrent };
  }

  /** Ends the factor of a calibration that was voided; the person then has no current factor from it. */
  async withdrawForCalibration(
    tx: Prisma.TransactionClient,
    ctx: AuditContext,
    calibrationId: string,
    reason: string,
  ): Promise<string | null> {
    const factor = await tx.factor.findUnique({ where: { calibrationId } });
    if (!factor || factor.state !== 'current') return null;
    await tx.factor.update({ where: { id: factor.id }, data: { state: 'withdrawn', endedAt: this.clock.now() } });
    await this.audit.record(tx, ctx, {
      action: 'withdraw',
      entityType: 'factor',
      entityId: factor.id,
      labId: factor.labId,
      oldValues: { state: 'current' },
      newValues: { state: 'withdrawn' },
      reason,
    });
    return factor.id;
  }
}

/**
 * A calibration approved after its balance failed a routine check that followed it was in that
 * check's impact (performed since the last passing check), but had no factor to mark then: its
 * factor is born marked for review, with the reason.
 */
async function laterFailedCheck(tx: Prisma.TransactionClient, cal: ApprovedCalibration): Promise<string | null> {
  const rows = await tx.$queryRaw<{ passed: boolean; performed_at: Date; asset_tag: string }[]>`
    SELECT bc.passed, bc.performed_at, b.asset_tag
      FROM calibrations c
      JOIN balance_checks bc ON bc.balance_id = c.balance_id AND bc.performed_at > c.performed_at
      JOIN balances b ON b.id = c.balance_id
     WHERE c.id = ${cal.id}::uuid
     ORDER BY bc.performed_at, bc.created_at
     LIMIT 1`;
  const first = rows[0];
  if (!first || first.passed) return null;
  return `Balance ${first.asset_tag} failed its routine check of ${first.performed_at.toISOString()}, the first after this calibration was performed`;
}

/**
 * Likewise for the thermometer: a calibration approved after its thermometer was found out of
 * tolerance, when the finding's impact reached it (performed before the finding was recorded and
 * since the thermometer's last calibration day as the finding kept it), had no factor to mark then. The finding is
 * the audited event itself; one recorded before its scope was kept falls back to the
 * instrument's calibration day now.
 */
async function laterThermometerFinding(tx: Prisma.TransactionClient, cal: ApprovedCalibration): Promise<string | null> {
  const rows = await tx.$queryRaw<{ asset_tag: string; found_at: string; reason: string | null }[]>`
    SELECT i.asset_tag, f.new_values->>'foundAt' AS found_at, f.reason
      FROM calibrations c
      JOIN instruments i ON i.id = c.thermometer_id
      JOIN labs l ON l.id = i.lab_id
      JOIN audit_entries f ON f.entity_type = 'instrument' AND f.entity_id = c.thermometer_id::text AND f.action = 'out-of-tolerance'
     WHERE c.id = ${cal.id}::uuid
       AND f.occurred_at >= c.performed_at
       AND coalesce(CASE WHEN f.new_values ? 'since' THEN (f.new_values->>'since')::timestamptz
                         ELSE i.calibration_date::timestamp AT TIME ZONE l.time_zone END, '-infinity') <= c.performed_at
     ORDER BY f.seq
     LIMIT 1`;
  const first = rows[0];
  if (!first) return null;
  return (
    `Thermometer ${first.asset_tag} was found out of tolerance at ${new Date(first.found_at).toISOString()}` +
    `${first.reason ? ` (${first.reason})` : ''}; the finding reached this calibration, performed with it before it was recorded`
  );
}

/** Single factor (ratio and correction) for one point; a curve for several. */
export function factorValues(points: readonly CalibratedPoint[]) {
  if (points.length === 0) throw new Error('an approved calibration has at least one point');
  const sorted = [...points].sort((a, b) => new Decimal(a.nominalVolumeMl).comparedTo(new Decimal(b.nominalVolumeMl)));
  const largest = sorted[sorted.length - 1] as CalibratedPoint;
  const nominal = new Decimal(largest.nominalVolumeMl);
  const mean = new Decimal(largest.meanVolumeMl);
  const worstU = Decimal.max(...sorted.map((p) => new Decimal(p.expandedUncertaintyMl)));
  const k = Decimal.max(...sorted.map((p) => new Decimal(p.coverageFactor)));
  if (sorted.length === 1) {
    return {
      kind: 'single',
      factor: mean.div(nominal).toSignificantDigits(15).toString(),
      correctionMl: mean.minus(nominal).toString(),
      curve: undefined,
      expandedUncertaintyMl: worstU.toString(),
      coverageFactor: k.toString(),
    } as const;
  }
  return {
    kind: 'curve',
    factor: mean.div(nominal).toSignificantDigits(15).toString(),
    correctionMl: null,
    curve: sorted.map((p) => ({
      nominalVolumeMl: p.nominalVolumeMl,
      meanVolumeMl: p.meanVolumeMl,
      correctionMl: new Decimal(p.meanVolumeMl).minus(p.nominalVolumeMl).toString(),
      expandedUncertaintyMl: p.expandedUncertaintyMl,
    })),
    expandedUncertaintyMl: worstU.toString(),
    coverageFactor: k.toString(),
  } as const;
}
