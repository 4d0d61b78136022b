import { randomUUID } from 'node:crypto';

import { Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';
import { Decimal, METROLOGY_LIBRARY_VERSION } from '@registry/metrology';

import { AuditWriter } from '../audit/audit-writer';
import { assertCanReadLab, assertLabMember } from '../auth/access-policy';
import type { RequestContext } from '../auth/actor';
import { type BalanceRecord, BalanceRepository } from '../balances/balance.repository';
import { Clock } from '../common/clock';
import { cursorInstant, decodeCursor, encodeCursor, type Page, toPage } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import { ImpactService } from '../impact/impact.service';
import { invalid } from '../inventory/inventory.errors';
import type { Tx } from '../inventory/inventory-workflow';
import { ReferenceWeightRepository } from '../reference-weights/reference-weight.repository';
import { evaluate } from './balance-check-evaluation';
import { type StoredResults, toView } from './balance-check.presenter';
import type { BalanceCheckView } from './balance-check.responses';
import { BalanceCheckRepository } from './balance-check.repository';
import type { CheckListQuery, RecordCheck } from './balance-check.schemas';
import { BalanceStatusKeeper } from './balance-status';
import { assertUsp41AccuracyWeight, usableWeight } from './traceability';

/** A check may be dated this far ahead of the server clock (clocks on the bench drift). */
export const FUTURE_SKEW_MS = 5 * 60_000;
const TX = { maxWait: 5_000, timeout: 15_000 } as const;
const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/**
 * Routine balance checks. Recording one is a single transaction: the balance
 * row is locked, the weight vetted, the readings evaluated by the metrology
 * library, the check appended with its inputs, results and library version,
 * then its consequences: the balance's status, its minimum weight (passing
 * USP <41> checks) and, for a failing check, the impact on calibrations and
 * factors made with the balance since its last passing check. Each write has
 * its audit entry in the same transaction.
 */
@Injectable()
export class BalanceCheckService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly clock: Clock,
    private readonly audit: AuditWriter,
    private readonly balances: BalanceRepository,
    private readonly weights: ReferenceWeightRepository,
    private readonly checks: BalanceCheckRepository,
    private readonly status: BalanceStatusKeeper,
    private readonly impact: ImpactService,
  ) {}

  async record(ctx: RequestContext, balanceId: string, body: RecordCheck): Promise<BalanceCheckView> {
    const now = this.clock.now();
    const performedAt = body.performedAt === undefined ? now : new Date(body.performedAt);
    if (performedAt.getTime() > now.getTime() + FUTURE_SKEW_MS) {
      throw invalid('performedAt', 'must not be in the future (at most 5 minutes ahead of the server clock)');
    }
    return this.prisma.$transaction(async (tx) => {
      const balance = await this.lockForCheck(tx, ctx, balanceId);
      const calendar = await this.checks.labCalendar(tx, balance.labId);
      const latest = await this.checks.latest(tx, balance.id);
      if (latest && performedAt < latest.performedAt) {
        throw new DomainError(
          'conflict',
          `Checks are recorded in the order performed: the latest check of ${balance.assetTag} was performed at ` +
            `${latest.performedAt.toISOString()}.`,
          [{ field: 'performedAt', reason: `must not be before ${latest.performedAt.toISOString()}` }],
        );
      }
      const weightAt = async (id: string, field: string) =>
        usableWeight(await this.weights.findById(tx, id), id, field, balance, performedAt, calendar.timeZone);
      const weight = await weightAt(body.referenceWeightId, 'referenceWeightId');
      let repeatabilityWeight = weight;
      if (body.kind === 'usp41') {
        assertUsp41AccuracyWeight(weight, balance, 'referenceWeightId');
        const other = body.repeatability.referenceWeightId;
        if (other !== undefined && other !== weight.id) repeatabilityWeight = await weightAt(other, 'repeatability.referenceWeightId');
      }
      const ev = evaluate(body, {
        balance: { capacityG: balance.capacityG, readabilityG: balance.readabilityG },
        weight,
        repeatabilityWeight,
      });

      const withEccentricity = body.kind === 'usp41' && body.eccentricity !== undefined;
      const ref = { id: randomUUID(), kind: body.kind, passed: ev.passed, performedAt, withEccentricity };
      const plan = await this.status.plan(tx, balance, ref);
      const impactReason =
        `${balance.assetTag} failed ${body.kind} check ${ref.id} performed ${performedAt.toISOString()}: ` +
        'calibrations made with it since its last passing check need review';
      const assessment = ev.passed
        ? null
        : await this.impact.assess(tx, 'balance', balance.id, (await this.checks.latest(tx, balance.id, true))?.performedAt ?? null);
      const minimumWeightStored = ev.kind === 'usp41' && ev.passed;
      const results: StoredResults = {
        evaluation: ev.results,
        balanceStatus: plan.outcome,
        minimumWeightStored,
        impact: assessment && this.impact.describe(assessment, impactReason, now),
      };
      const stored = await this.checks.insert(
        tx,
        {
          ...ref,
          labId: balance.labId,
          balanceId: balance.id,
          performedById: ctx.actor.id,
          referenceWeightId: weight.id,
          inputs: ev.inputs,
          results,
          // The column keeps 9 decimals (1 ng); rounded up, the side that never understates a minimum weight.
          minimumWeightG: ev.minimumWeightG === null ? null : new Decimal(ev.minimumWeightG).toDecimalPlaces(9, Decimal.ROUND_UP).toFixed(),
          libraryVersion: METROLOGY_LIBRARY_VERSION,
          notes: body.notes ?? null,
        },
        now,
      );
      await this.audit.record(tx, ctx, {
        action: 'create',
        entityType: 'balance-check',
        entityId: stored.id,
        labId: stored.labId,
        newValues: { ...toView(stored), impact: undefined },
      });
      const after = await this.status.apply(tx, ctx, balance, plan, ref.id, now);
      if (assessment) await this.impact.markForReview(tx, ctx, assessment, impactReason, now);
      if (minimumWeightStored && stored.minimumWeightG !== null) {
        await this.status.storeMinimumWeight(tx, ctx, after, stored.minimumWeightG, ref, now);
      }
      return toView(stored);
    }, TX);
  }

  async list(ctx: RequestContext, balanceId: string, query: CheckListQuery): Promise<Page<BalanceCheckView>> {
    await this.readableBalance(this.prisma, ctx, balanceId);
    const after = query.cursor === undefined ? null : decodeCheckCursor(query.cursor);
    const rows = await this.checks.page(this.prisma, balanceId, query.limit + 1, after);
    const page = toPage(rows, query.limit, (c) => encodeCursor(c.performedAt.toISOString(), c.id));
    return { items: page.items.map(toView), nextCursor: page.nextCursor };
  }

  async get(ctx: RequestContext, balanceId: string, checkId: string): Promise<BalanceCheckView> {
    await this.readableBalance(this.prisma, ctx, balanceId);
    const check = await this.checks.findById(this.prisma, checkId);
    if (!check || check.balanceId !== balanceId) throw new DomainError('not-found', 'No check of this balance with that id.');
    return toView(check);
  }

  private async readableBalance(tx: Tx, ctx: RequestContext, balanceId: string): Promise<BalanceRecord> {
    const balance = await this.balances.findById(tx, balanceId);
    if (!balance) throw new DomainError('not-found', 'No balance with that id.');
    assertCanReadLab(ctx.actor, balance.labId, 'balance');
    return balance;
  }

  /** The balance, locked, when the caller may record its checks: its lab's analysts and managers, administrators. */
  private async lockForCheck(tx: Tx, ctx: RequestContext, balanceId: string): Promise<BalanceRecord> {
    const seen = await this.readableBalance(tx, ctx, balanceId);
    assertLabMember(ctx.actor, seen.labId, 'balance');
    await this.checks.lockBalance(tx, balanceId);
    const balance = (await this.balances.findById(tx, balanceId)) ?? seen;
    if (balance.status === 'retired') {
      throw new DomainError('invalid-state', `${balance.assetTag} is retired; retired balances take no checks.`, undefined, {
        state: 'retired',
      });
    }
    return balance;
  }
}

function decodeCheckCursor(cursor: string): { performedAt: Date; id: string } {
  const { sortValue, id } = decodeCursor(cursor);
  const performedAt = cursorInstant(sortValue);
  if (!UUID.test(id)) {
    throw new DomainError('validation-failed', 'The cursor does not belong to this list.', [{ field: 'cursor', reason: 'invalid cursor' }]);
  }
  return { performedAt, id };
}
