import { Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import type { RequestContext } from '../auth/actor';
import { cursorInstant, decodeCursor, encodeCursor, type Page, toPage } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import { factorReadScope, mayReadFactor } from './factor-access';
import { factorEtag, presentFactor } from './factor.presenter';
import { FactorRepository } from './factor.repository';
import type { FactorListQuery, FactorView } from './factor.schemas';

const invalidCursor = () =>
  new DomainError('validation-failed', 'The cursor is not one this API issued.', [{ field: 'cursor', reason: 'invalid cursor' }]);

/** Personal factors as registry records: lists and single reads, history included. */
@Injectable()
export class FactorsService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly factors: FactorRepository,
  ) {}

  async list(ctx: RequestContext, query: FactorListQuery): Promise<Page<FactorView>> {
    const after = query.cursor ? decodeCursor(query.cursor) : undefined;
    const afterAt = after ? cursorInstant(after.sortValue) : undefined;
    if (after && !isUuid(after.id)) throw invalidCursor();
    const rows = await this.factors.list(
      this.prisma,
      factorReadScope(ctx.actor),
      { personId: query.personId, vesselId: query.vesselId, labId: query.labId, state: query.state },
      query.limit + 1,
      after && afterAt ? { createdAt: afterAt, id: after.id } : undefined,
    );
    const page = toPage(rows, query.limit, (f) => encodeCursor(f.createdAt.toISOString(), f.id));
    return { items: page.items.map(presentFactor), nextCursor: page.nextCursor };
  }

  async get(ctx: RequestContext, id: string): Promise<{ view: FactorView; etag: string }> {
    const factor = await this.factors.findById(this.prisma, id);
    if (!factor || !mayReadFactor(factorReadScope(ctx.actor), factor)) throw new DomainError('not-found', 'No factor with that id.');
    const view = presentFactor(factor);
    return { view, etag: factorEtag(view.id, view.state, view.reviewRequired) };
  }
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
const isUuid = (v: string): boolean => UUID.test(v);
