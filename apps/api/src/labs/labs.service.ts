import { Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import type { RequestContext } from '../auth/actor';
import { assertAdministrator, assertCanReadLab, readableLabs } from '../auth/access-policy';
import { Clock } from '../common/clock';
import { expectedVersion, staleVersion } from '../common/http/concurrency';
import { decodeCursor, encodeCursor, type Page, toPage } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import { presentLab } from './lab.presenter';
import { type Lab, LabsRepository } from './labs.repository';
import type { CreateLab, LabListQuery, LabView, UpdateLab } from './labs.schemas';

const snapshot = (lab: Lab) => ({
  code: lab.code,
  name: lab.name,
  timeZone: lab.timeZone,
  fourEyesRequired: lab.fourEyesRequired,
  balanceCheckWindowDays: lab.balanceCheckWindowDays,
  factorValidityDays: lab.factorValidityDays,
  allowTraceabilityExceptions: lab.allowTraceabilityExceptions,
  quarantineOnFailedCalibration: lab.quarantineOnFailedCalibration,
});

@Injectable()
export class LabsService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly labs: LabsRepository,
    private readonly audit: AuditWriter,
    private readonly clock: Clock,
  ) {}

  async create(ctx: RequestContext, body: CreateLab): Promise<LabView> {
    assertAdministrator(ctx.actor);
    const lab = await this.prisma.$transaction(async (tx) => {
      const created = await this.labs.create(tx, { ...body, fourEyesRequired: body.fourEyesRequired ?? true }, this.clock.now());
      await this.audit.record(tx, ctx, {
        action: 'create',
        entityType: 'lab',
        entityId: created.id,
        labId: created.id,
        newValues: snapshot(created),
      });
      return created;
    });
    return presentLab(lab);
  }

  async list(ctx: RequestContext, query: LabListQuery): Promise<Page<LabView>> {
    const after = query.cursor ? decodeCursor(query.cursor) : undefined;
    const rows = await this.labs.listReadable(
      this.prisma,
      readableLabs(ctx.actor),
      query.limit + 1,
      after ? { code: String(after.sortValue), id: after.id } : undefined,
    );
    const page = toPage(rows, query.limit, (lab) => encodeCursor(lab.code, lab.id));
    return { items: page.items.map(presentLab), nextCursor: page.nextCursor };
  }

  async get(ctx: RequestContext, labId: string): Promise<LabView> {
    return presentLab(await this.readable(ctx, labId));
  }

  async update(ctx: RequestContext, labId: string, changes: UpdateLab, ifMatch: string | undefined): Promise<LabView> {
    const before = await this.readable(ctx, labId);
    assertAdministrator(ctx.actor);
    const version = expectedVersion(ifMatch);
    if (version !== before.version) throw staleVersion(before.version);
    const after = await this.prisma.$transaction(async (tx) => {
      if (!(await this.labs.updateIfVersion(tx, labId, version, changes, this.clock.now()))) throw staleVersion();
      const updated = await this.labs.findById(tx, labId);
      if (!updated) throw new DomainError('not-found', 'No lab with that id.');
      await this.audit.record(tx, ctx, {
        action: 'update',
        entityType: 'lab',
        entityId: labId,
        labId,
        oldValues: snapshot(before),
        newValues: snapshot(updated),
      });
      return updated;
    });
    return presentLab(after);
  }

  /** The lab, when the actor may read it; otherwise 404 as if it did not exist. */
  private async readable(ctx: RequestContext, labId: string): Promise<Lab> {
    assertCanReadLab(ctx.actor, labId, 'lab');
    const lab = await this.labs.findById(this.prisma, labId);
    if (!lab) throw new DomainError('not-found', 'No lab with that id.');
    return lab;
  }
}
