import { Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';
import { Decimal, conventionalMassFromTrueMass, trueMassFromReading } from '@registry/metrology';

import { assertCanReadLab } from '../auth/access-policy';
import type { RequestContext } from '../auth/actor';
import { type BalanceRecord, BalanceRepository } from '../balances/balance.repository';
import { resolveAir } from '../calculations/air';
import { type ApiWarning, renamed, withFieldPaths } from '../calculations/field-paths';
import { Clock } from '../common/clock';
import { DomainError } from '../common/problem/domain-error';
import { echoDecimal as echo, formatDecimal as str } from '../common/quantity';
import { isOverdue } from '../impact/lab-calendar';
import { BalanceCheckRepository } from './balance-check.repository';
import { type RuleBroken, traceabilityViolation } from './traceability';
import type { WeighingCorrectionRequest, WeighingCorrectionResponse } from './weighing-correction.schemas';

const DAY_MS = 86_400_000;
const CONVENTIONAL_FIELDS = renamed([[/^densityKgPerM3$/, 'objectDensityKgPerM3']]);

/**
 * Air-buoyancy correction of a reading on a named balance, with that
 * balance's adjustment-weight density. Nothing is stored.
 *
 * A reading is corrected only when it is traceable: a quarantined or retired
 * balance, or one whose external calibration is overdue or not on record, is
 * refused (422 traceability-violation naming the rule), because a corrected
 * value looks more trustworthy than the reading it came from. What only calls
 * for care is a warning: a reading below the balance's minimum weight, no
 * minimum weight determined yet, no passing routine check within the lab's window.
 */
@Injectable()
export class WeighingCorrectionService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly clock: Clock,
    private readonly balances: BalanceRepository,
    private readonly checks: BalanceCheckRepository,
  ) {}

  async correct(ctx: RequestContext, balanceId: string, body: WeighingCorrectionRequest): Promise<WeighingCorrectionResponse> {
    const balance = await this.balances.findById(this.prisma, balanceId);
    if (!balance) throw new DomainError('not-found', 'No balance with that id.');
    assertCanReadLab(ctx.actor, balance.labId, 'balance');
    const now = this.clock.now();
    const calendar = await this.checks.labCalendar(this.prisma, balance.labId);
    assertTraceable(balance, now, calendar.timeZone);

    const air = resolveAir(body);
    const r = trueMassFromReading({
      readingG: body.readingG,
      objectDensityKgPerM3: body.objectDensityKgPerM3,
      airDensityKgPerM3: air.densityKgPerM3,
      weightDensityKgPerM3: balance.adjustmentWeightDensityKgPerM3,
    });
    const conventional = withFieldPaths(CONVENTIONAL_FIELDS, () =>
      conventionalMassFromTrueMass({ massG: r.trueMassG, densityKgPerM3: body.objectDensityKgPerM3 }),
    );
    const warnings: ApiWarning[] = [...minimumWeightWarnings(balance, body.readingG), ...air.warnings];
    const latest = await this.checks.latest(this.prisma, balance.id);
    if (!latest?.passed || now.getTime() - latest.performedAt.getTime() > calendar.balanceCheckWindowDays * DAY_MS) {
      warnings.push({
        code: 'no-recent-passing-check',
        message: latest
          ? `The latest routine check of ${balance.assetTag} (${latest.performedAt.toISOString()}) ${latest.passed ? 'is older than the lab’s window' : 'failed'}.`
          : `${balance.assetTag} has no routine check on record.`,
      });
    }
    return {
      balance: {
        id: balance.id,
        assetTag: balance.assetTag,
        status: balance.status,
        externalCalibrationDue: balance.externalCalibrationDue,
        minimumWeightG: balance.minimumWeightG,
      },
      readingG: echo(body.readingG),
      objectDensityKgPerM3: echo(body.objectDensityKgPerM3),
      airDensityKgPerM3: air.source === 'given' ? echo(air.densityKgPerM3) : str(air.densityKgPerM3),
      airDensitySource: air.source,
      adjustmentWeightDensityKgPerM3: balance.adjustmentWeightDensityKgPerM3,
      trueMassG: str(r.trueMassG),
      conventionalMassG: str(conventional),
      correctionG: str(r.correctionG),
      factor: str(r.factor),
      warnings,
    };
  }
}

function assertTraceable(balance: BalanceRecord, now: Date, timeZone: string): void {
  const broken: RuleBroken[] = [];
  const at = (rule: RuleBroken['rule'], detail: string) => broken.push({ rule, itemId: balance.id, field: 'balanceId', detail });
  if (balance.status !== 'in-service') at('balance-in-service', `${balance.assetTag} is ${balance.status}.`);
  if (balance.externalCalibrationDue === null) {
    at('balance-calibration-current', `${balance.assetTag} has no external calibration on record.`);
  } else if (isOverdue(balance.externalCalibrationDue, now, timeZone)) {
    at('balance-calibration-current', `The external calibration of ${balance.assetTag} was due on ${balance.externalCalibrationDue}.`);
  }
  if (broken.length > 0) throw traceabilityViolation('A reading from this balance cannot be corrected as traceable.', broken);
}

function minimumWeightWarnings(balance: BalanceRecord, readingG: string): ApiWarning[] {
  if (balance.minimumWeightG === null) {
    return [
      {
        code: 'minimum-weight-unknown',
        field: 'readingG',
        message: `${balance.assetTag} has no minimum weight yet: a passing USP <41> check determines it.`,
      },
    ];
  }
  if (new Decimal(readingG).lessThan(balance.minimumWeightG)) {
    return [
      {
        code: 'below-minimum-weight',
        field: 'readingG',
        message: `The reading is below the minimum weight of ${balance.assetTag} (${balance.minimumWeightG} g): its relative repeatability exceeds 0.10 %.`,
      },
    ];
  }
  return [];
}
