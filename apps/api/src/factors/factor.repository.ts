import { Injectable } from '@nestjs/common';
import type { Prisma } from '@registry/data';

import type { Db } from '../common/db';
import type { FactorReadScope } from './factor-access';
import type { FactorRecord } from './factor.presenter';
import type { FactorState } from './factor.schemas';

export interface FactorFilters {
  readonly personId?: string;
  readonly vesselId?: string;
  readonly labId?: string;
  readonly state?: FactorState;
}

function visible(scope: FactorReadScope): Prisma.FactorWhereInput | null {
  if (scope.all) return {};
  const either: Prisma.FactorWhereInput[] = [];
  if (scope.labIds.length) either.push({ labId: { in: [...scope.labIds] } });
  if (scope.ownPersonId) either.push({ personId: scope.ownPersonId });
  return either.length ? { OR: either } : null;
}

/** Registry reads of personal factors (the factor service's hot path has its own repository). */
@Injectable()
export class FactorRepository {
  findById(db: Db, id: string): Promise<FactorRecord | null> {
    return db.factor.findUnique({ where: { id } });
  }

  /** A page of the factors the scope allows, newest first; `after` is the last createdAt and id seen. */
  async list(
    db: Db,
    scope: FactorReadScope,
    filters: FactorFilters,
    limit: number,
    after?: { createdAt: Date; id: string },
  ): Promise<FactorRecord[]> {
    const allowed = visible(scope);
    if (!allowed) return [];
    return db.factor.findMany({
      where: {
        AND: [
          allowed,
          { personId: filters.personId, vesselId: filters.vesselId, labId: filters.labId, state: filters.state },
          after ? { OR: [{ createdAt: { lt: after.createdAt } }, { createdAt: after.createdAt, id: { lt: after.id } }] } : {},
        ],
      },
      orderBy: [{ createdAt: 'desc' }, { id: 'desc' }],
      take: limit,
    });
  }
}
