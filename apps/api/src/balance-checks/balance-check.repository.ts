import { Injectable } from '@nestjs/common';
import type { Prisma } from '@registry/data';

import type { Tx } from '../inventory/inventory-workflow';

/** A check as stored: `inputs` and `results` are the JSON written by the service. */
export interface StoredCheck {
  readonly id: string;
  readonly labId: string;
  readonly balanceId: string;
  readonly performedById: string;
  readonly performedByName: string;
  readonly performedAt: Date;
  readonly kind: 'quick' | 'usp41' | 'eccentricity';
  readonly referenceWeightId: string;
  readonly inputs: unknown;
  readonly results: unknown;
  readonly minimumWeightG: string | null;
  readonly passed: boolean;
  readonly libraryVersion: string;
  readonly notes: string | null;
  readonly createdAt: Date;
}

export type NewCheck = Omit<StoredCheck, 'performedByName' | 'createdAt'>;

export interface CheckFact {
  readonly id: string;
  readonly performedAt: Date;
  readonly passed: boolean;
}

/** The latest audited status change of a balance: who or what set its status. */
export interface StatusChangeFact {
  readonly action: string;
  readonly status: string | null;
  /** Set when a failed balance check made the change. */
  readonly balanceCheckId: string | null;
  readonly reason: string | null;
  readonly occurredAt: Date;
}

export interface LabCalendar {
  readonly timeZone: string;
  readonly balanceCheckWindowDays: number;
}

type Row = Prisma.BalanceCheckGetPayload<object>;

@Injectable()
export class BalanceCheckRepository {
  /** Serialises checks (and their status changes) per balance until the transaction ends; false when there is no such balance. */
  async lockBalance(tx: Tx, balanceId: string): Promise<boolean> {
    const rows = await tx.$queryRaw<{ id: string }[]>`SELECT id FROM balances WHERE id = ${balanceId}::uuid FOR UPDATE`;
    return rows.length === 1;
  }

  async labCalendar(tx: Tx, labId: string): Promise<LabCalendar> {
    const lab = await tx.lab.findUniqueOrThrow({ where: { id: labId }, select: { timeZone: true, balanceCheckWindowDays: true } });
    return lab;
  }

  /** The most recent check by performance time (ties: the later recorded). */
  async latest(tx: Tx, balanceId: string, passedOnly = false): Promise<CheckFact | null> {
    return tx.balanceCheck.findFirst({
      where: { balanceId, ...(passedOnly ? { passed: true } : {}) },
      orderBy: [{ performedAt: 'desc' }, { createdAt: 'desc' }],
      select: { id: true, performedAt: true, passed: true },
    });
  }

  async kindOf(tx: Tx, checkId: string): Promise<StoredCheck['kind'] | null> {
    const row = await tx.balanceCheck.findUnique({ where: { id: checkId }, select: { kind: true } });
    return (row?.kind as StoredCheck['kind'] | undefined) ?? null;
  }

  async lastStatusChange(tx: Tx, balanceId: string): Promise<StatusChangeFact | null> {
    const rows = await tx.$queryRaw<StatusChangeFact[]>`
      SELECT action, new_values ->> 'status' AS status, new_values ->> 'balanceCheckId' AS "balanceCheckId", reason,
             occurred_at AS "occurredAt"
        FROM audit_entries
       WHERE entity_type = 'balance' AND entity_id = ${balanceId} AND new_values ? 'status'
       ORDER BY seq DESC
       LIMIT 1`;
    return rows[0] ?? null;
  }

  async insert(tx: Tx, check: NewCheck, now: Date): Promise<StoredCheck> {
    const row = await tx.balanceCheck.create({
      data: {
        id: check.id,
        labId: check.labId,
        balanceId: check.balanceId,
        performedById: check.performedById,
        performedAt: check.performedAt,
        kind: check.kind,
        referenceWeightId: check.referenceWeightId,
        inputs: check.inputs as Prisma.InputJsonValue,
        results: check.results as Prisma.InputJsonValue,
        minimumWeightG: check.minimumWeightG,
        passed: check.passed,
        libraryVersion: check.libraryVersion,
        notes: check.notes,
        createdAt: now,
      },
    });
    return (await this.withNames(tx, [row]))[0] as StoredCheck;
  }

  async findById(tx: Tx, id: string): Promise<StoredCheck | null> {
    const row = await tx.balanceCheck.findUnique({ where: { id } });
    return row ? ((await this.withNames(tx, [row]))[0] as StoredCheck) : null;
  }

  /** Newest first (performance time, then id), continuing after the cursor's (performedAt, id). */
  async page(tx: Tx, balanceId: string, take: number, after: { performedAt: Date; id: string } | null): Promise<StoredCheck[]> {
    const rows = await tx.balanceCheck.findMany({
      where: {
        balanceId,
        ...(after ? { OR: [{ performedAt: { lt: after.performedAt } }, { performedAt: after.performedAt, id: { lt: after.id } }] } : {}),
      },
      orderBy: [{ performedAt: 'desc' }, { id: 'desc' }],
      take,
    });
    return this.withNames(tx, rows);
  }

  private async withNames(tx: Tx, rows: readonly Row[]): Promise<StoredCheck[]> {
    const people = await tx.person.findMany({
      where: { id: { in: [...new Set(rows.map((r) => r.performedById))] } },
      select: { id: true, displayName: true },
    });
    const names = new Map(people.map((p) => [p.id, p.displayName]));
    return rows.map((r) => ({
      id: r.id,
      labId: r.labId,
      balanceId: r.balanceId,
      performedById: r.performedById,
      performedByName: names.get(r.performedById) ?? '',
      performedAt: r.performedAt,
      kind: r.kind as StoredCheck['kind'],
      referenceWeightId: r.referenceWeightId ?? '',
      inputs: r.inputs,
      results: r.results,
      minimumWeightG: r.minimumWeightG?.toFixed() ?? null,
      passed: r.passed,
      libraryVersion: r.libraryVersion,
      notes: r.notes,
      createdAt: r.createdAt,
    }));
  }
}
