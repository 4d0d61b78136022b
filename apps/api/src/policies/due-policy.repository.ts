import { Injectable } from '@nestjs/common';
import type { Prisma } from '@registry/data';

import { type Db, isUniqueViolation } from '../common/db';
import { DomainError } from '../common/problem/domain-error';

export type StoredPolicy = Prisma.DuePolicyGetPayload<object>;
export type StoredChange = Prisma.IntervalChangeGetPayload<object>;

export interface PolicyValues {
  readonly intervalDays: number | null;
  readonly dueSoonDays: number;
  readonly adaptive: boolean;
  readonly minIntervalDays: number | null;
  readonly maxIntervalDays: number | null;
  readonly maxStepDays: number | null;
  readonly lengthenAfterPasses: number | null;
  readonly adaptiveFrom: Date | null;
}

export interface NewPolicy extends PolicyValues {
  readonly labId: string;
  readonly subjectKind: string;
  readonly vesselKind: string | null;
  readonly accuracyClass: string | null;
}

export interface NewChange {
  readonly labId: string;
  readonly policyId: string;
  readonly subjectKind: string;
  readonly oldIntervalDays: number | null;
  readonly newIntervalDays: number;
  readonly reason: string;
  readonly approvedById: string;
  readonly changedAt: Date;
}

const duplicate = () =>
  new DomainError('conflict', 'The lab already has a policy for this kind (and vessel kind and class); change that one.', [
    { field: 'subjectKind', reason: 'already has a policy' },
  ]);

@Injectable()
export class DuePolicyRepository {
  async create(db: Db, p: NewPolicy, now: Date): Promise<StoredPolicy> {
    try {
      return await db.duePolicy.create({ data: { ...p, createdAt: now, updatedAt: now } });
    } catch (error) {
      if (isUniqueViolation(error)) throw duplicate();
      throw error;
    }
  }

  findById(db: Db, id: string): Promise<StoredPolicy | null> {
    return db.duePolicy.findUnique({ where: { id } });
  }

  async updateIfVersion(db: Db, id: string, version: number, values: PolicyValues, now: Date): Promise<boolean> {
    const r = await db.duePolicy.updateMany({ where: { id, version }, data: { ...values, updatedAt: now, version: { increment: 1 } } });
    return r.count === 1;
  }

  page(db: Db, labs: 'all' | string[], q: { labId?: string; subjectKind?: string }, limit: number, afterId: string | null) {
    return db.duePolicy.findMany({
      where: {
        ...(labs === 'all' ? {} : { labId: { in: labs } }),
        ...(q.labId ? { labId: q.labId } : {}),
        ...(q.subjectKind ? { subjectKind: q.subjectKind } : {}),
        ...(afterId ? { id: { gt: afterId } } : {}),
      },
      orderBy: { id: 'asc' },
      take: limit,
    });
  }

  recordChange(db: Db, c: NewChange): Promise<StoredChange> {
    return db.intervalChange.create({ data: { ...c, method: 'policy', subjectId: null, basedOnCalibrationId: null } });
  }

  changes(
    db: Db,
    labs: 'all' | string[],
    q: { labId?: string; policyId?: string; subjectId?: string },
    limit: number,
    after: { changedAt: Date; id: string } | null,
  ): Promise<StoredChange[]> {
    return db.intervalChange.findMany({
      where: {
        ...(labs === 'all' ? {} : { labId: { in: labs } }),
        ...(q.labId ? { labId: q.labId } : {}),
        ...(q.policyId ? { policyId: q.policyId } : {}),
        ...(q.subjectId ? { subjectId: q.subjectId } : {}),
        ...(after ? { OR: [{ changedAt: { lt: after.changedAt } }, { changedAt: after.changedAt, id: { lt: after.id } }] } : {}),
      },
      orderBy: [{ changedAt: 'desc' }, { id: 'desc' }],
      take: limit,
    });
  }
}
