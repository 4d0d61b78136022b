import { Injectable } from '@nestjs/common';

import { AuditWriter } from '../audit/audit-writer';
import type { AuditContext } from '../auth/actor';
import { type BalanceRecord, BalanceRepository } from '../balances/balance.repository';
import { staleVersion } from '../common/http/concurrency';
import type { Tx } from '../inventory/inventory-workflow';
import type { BalanceStatusOutcome } from './balance-check.responses';
import { BalanceCheckRepository } from './balance-check.repository';

/** What a check does to its balance's status. */
export interface StatusPlan {
  readonly outcome: BalanceStatusOutcome;
  readonly change: 'quarantine' | 'return-to-service' | null;
}

export type CheckKind = 'quick' | 'usp41' | 'eccentricity';

interface CheckRef {
  readonly id: string;
  readonly kind: CheckKind;
  readonly passed: boolean;
  readonly performedAt: Date;
  /** A USP <41> check with corner loads also tests eccentricity. */
  readonly withEccentricity: boolean;
}

const ANSWERED_BY: Readonly<Record<CheckKind, string>> = {
  quick: 'a quick or USP <41> check',
  usp41: 'a USP <41> check',
  eccentricity: 'an eccentricity test, or a USP <41> check with corner loads,',
};

/**
 * The kinds of failure a passing check answers: a USP <41> check tests
 * accuracy as a quick check does (and eccentricity when it has corner loads);
 * a quick or eccentricity check does not vouch for repeatability.
 */
export function failuresAnswered(check: Pick<CheckRef, 'kind' | 'withEccentricity'>): readonly CheckKind[] {
  switch (check.kind) {
    case 'usp41':
      return check.withEccentricity ? ['usp41', 'quick', 'eccentricity'] : ['usp41', 'quick'];
    case 'quick':
      return ['quick'];
    case 'eccentricity':
      return ['eccentricity'];
  }
}

/**
 * The balance's status follows its checks:
 *  - a failing check quarantines a balance in service;
 *  - a passing check returns it to service only when the quarantine came from
 *    a failed check (the latest audited status change is such a quarantine)
 *    and the passing check tests what failed (failuresAnswered).
 *    A balance a person quarantined stays so until a manager releases it:
 *    they had a reason the check does not know about.
 * Every change is an audit entry in the check's transaction, with the check
 * id, so the trail says why; the caller holds the balance's row lock.
 */
@Injectable()
export class BalanceStatusKeeper {
  constructor(
    private readonly balances: BalanceRepository,
    private readonly checks: BalanceCheckRepository,
    private readonly audit: AuditWriter,
  ) {}

  async plan(tx: Tx, balance: BalanceRecord, check: CheckRef): Promise<StatusPlan> {
    const status = balance.status;
    if (!check.passed) {
      if (status === 'in-service') {
        return {
          outcome: { before: status, after: 'quarantined', reason: `Quarantined: failed ${check.kind} check ${check.id}.` },
          change: 'quarantine',
        };
      }
      return {
        outcome: { before: status, after: status, reason: `Already ${status}; the failed check keeps it out of use.` },
        change: null,
      };
    }
    if (status === 'in-service')
      return { outcome: { before: status, after: status, reason: 'In service; the check passed.' }, change: null };
    const last = await this.checks.lastStatusChange(tx, balance.id);
    if (last?.action === 'quarantine' && last.status === 'quarantined' && last.balanceCheckId) {
      const failed = await this.checks.kindOf(tx, last.balanceCheckId);
      if (failed && !failuresAnswered(check).includes(failed)) {
        return {
          outcome: {
            before: status,
            after: status,
            reason:
              `Stays ${status}: failed ${failed} check ${last.balanceCheckId} quarantined it, and a passing ${check.kind} check ` +
              `does not answer that failure (${ANSWERED_BY[failed]} does).`,
          },
          change: null,
        };
      }
      return {
        outcome: {
          before: status,
          after: 'in-service',
          reason: `Returned to service: ${check.kind} check ${check.id} passed after failed check ${last.balanceCheckId} had quarantined it.`,
        },
        change: 'return-to-service',
      };
    }
    const by = last
      ? `it was set ${status} by a person on ${last.occurredAt.toISOString()}${last.reason ? ` (“${last.reason}”)` : ''}`
      : 'no failed check set it so';
    return {
      outcome: {
        before: status,
        after: status,
        reason: `Stays ${status}: ${by}, so only the lab’s managers return it to service.`,
      },
      change: null,
    };
  }

  /** Carries out the plan; returns the balance as it is afterwards. */
  async apply(tx: Tx, ctx: AuditContext, balance: BalanceRecord, plan: StatusPlan, checkId: string, now: Date): Promise<BalanceRecord> {
    if (!plan.change) return balance;
    const updated = await this.write(tx, balance, { status: plan.outcome.after }, now);
    await this.audit.record(tx, ctx, {
      action: plan.change,
      entityType: 'balance',
      entityId: balance.id,
      labId: balance.labId,
      oldValues: { status: balance.status, version: balance.version },
      newValues: { status: updated.status, version: updated.version, balanceCheckId: checkId },
      reason: plan.outcome.reason,
    });
    return updated;
  }

  /** Stores the minimum weight a passing USP <41> check derived. */
  async storeMinimumWeight(
    tx: Tx,
    ctx: AuditContext,
    balance: BalanceRecord,
    minimumWeightG: string,
    check: CheckRef,
    now: Date,
  ): Promise<BalanceRecord> {
    const determinedAt = check.performedAt.toISOString();
    const updated = await this.write(tx, balance, { minimumWeightG, minimumWeightDeterminedAt: determinedAt }, now);
    await this.audit.record(tx, ctx, {
      action: 'set-minimum-weight',
      entityType: 'balance',
      entityId: balance.id,
      labId: balance.labId,
      oldValues: {
        minimumWeightG: balance.minimumWeightG,
        minimumWeightDeterminedAt: balance.minimumWeightDeterminedAt,
        version: balance.version,
      },
      newValues: {
        minimumWeightG: updated.minimumWeightG,
        minimumWeightDeterminedAt: updated.minimumWeightDeterminedAt,
        version: updated.version,
        balanceCheckId: check.id,
      },
      reason: `USP <41> check ${check.id} passed: minimum weight 2000 · s`,
    });
    return updated;
  }

  private async write(tx: Tx, balance: BalanceRecord, changes: Partial<BalanceRecord>, now: Date): Promise<BalanceRecord> {
    const updated = await this.balances.update(tx, balance.id, balance.version, changes, now);
    // The caller holds the row lock, so the version cannot have moved; guard anyway.
    if (!updated) throw staleVersion();
    return updated;
  }
}
