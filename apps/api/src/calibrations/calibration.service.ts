import { Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import { canReadLab, readableLabs } from '../auth/access-policy';
import type { RequestContext } from '../auth/actor';
import { Clock } from '../common/clock';
import { expectedVersion, staleVersion } from '../common/http/concurrency';
import { cursorInstant, decodeCursor, encodeCursor, type Page, toPage } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import type { Tx } from '../inventory/inventory-workflow';
import { presentCalibration, presentSummary } from './calibration.presenter';
import { type CalibrationRecord, CalibrationRepository, type DraftChanges } from './calibration.repository';
import type { CalibrationSummary, CalibrationView } from './calibration.responses';
import type { CalibrationListQuery, CreateCalibration, UpdateCalibration } from './calibration.schemas';
import { assertCanEdit, assertCanRead, assertCanRecordFor, assertCanRecordOwn, assertState, notFound } from './calibration-access';
import { computeCalibration } from './calibration-computation';
import { CalibrationFactsRepository } from './calibration-facts.repository';
import { checkedInputs, enteredFromCreate, enteredFromPatch } from './calibration-inputs';
import { assertNotInFuture, CalibrationItems, subjectOf } from './calibration-items';

export const TX = { maxWait: 5_000, timeout: 15_000 } as const;

/** What a calibration's audit entries show of it (inputs included: they are the raw data). */
export const auditSnapshot = (c: CalibrationRecord) => ({
  vesselId: c.vesselId,
  performerId: c.performerId,
  enteredById: c.enteredById,
  balanceId: c.balanceId,
  thermometerId: c.thermometerId,
  performedAt: c.performedAt,
  state: c.state,
  notes: c.notes,
  inputs: c.inputs,
  version: c.version,
});

/** Recording calibrations: drafts are created, read and edited here; the lifecycle is in CalibrationLifecycle. */
@Injectable()
export class CalibrationService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly calibrations: CalibrationRepository,
    private readonly facts: CalibrationFactsRepository,
    private readonly items: CalibrationItems,
    private readonly audit: AuditWriter,
    private readonly clock: Clock,
  ) {}

  async create(ctx: RequestContext, body: CreateCalibration): Promise<CalibrationView> {
    return this.prisma.$transaction(async (tx) => {
      const vessel = await this.items.vessel(tx, body.vesselId);
      if (!vessel || !canReadLab(ctx.actor, vessel.labId)) throw new DomainError('not-found', 'No vessel with that id.');
      const labId = vessel.labId;
      const actorId = ctx.actor.kind === 'person' ? ctx.actor.id : null;
      const performerId = body.performerId ?? actorId ?? '';
      if (performerId === actorId) assertCanRecordOwn(ctx.actor, labId);
      else await this.assertPerformer(tx, ctx, labId, performerId);
      const policy = await this.facts.labPolicy(tx, labId);
      if (!policy || policy.retired) throw new DomainError('conflict', 'The vessel’s lab is retired; it takes no new calibrations.');
      const { balance } = await this.items.instrumentsOf(tx, labId, body.balanceId, body.thermometerId);
      const now = this.clock.now();
      const performedAt = new Date(body.performedAt);
      assertNotInFuture(performedAt, now);
      const inputs = checkedInputs(enteredFromCreate(body), vessel);
      // Refuse impossible quantities now (422 naming the field), not only at submission.
      computeCalibration(inputs, subjectOf(vessel, balance, vessel.deliveryMode), now);
      const created = await this.calibrations.insert(
        tx,
        {
          labId,
          vesselId: vessel.id,
          performerId,
          enteredById: actorId ?? performerId,
          balanceId: body.balanceId,
          thermometerId: body.thermometerId,
          performedAt,
          deliveryMode: vessel.deliveryMode,
          inputs,
          notes: body.notes ?? null,
        },
        now,
      );
      await this.audit.record(tx, ctx, {
        action: 'create',
        entityType: 'calibration',
        entityId: created.id,
        labId,
        newValues: auditSnapshot(created),
      });
      return presentCalibration(created, null);
    }, TX);
  }

  async list(ctx: RequestContext, query: CalibrationListQuery): Promise<Page<CalibrationSummary>> {
    const labs = readableLabs(ctx.actor);
    if (query.labId !== undefined && labs !== 'all' && !labs.includes(query.labId)) return { items: [], nextCursor: null };
    const cursor = query.cursor === undefined ? undefined : decodeCursor(query.cursor);
    const after = cursor && cursorAfter(cursor);
    const rows = await this.calibrations.list(this.prisma, {
      labs,
      labId: query.labId,
      vesselId: query.vesselId,
      performerId: query.performerId,
      state: query.state,
      performedFrom: query.performedFrom === undefined ? undefined : new Date(query.performedFrom),
      performedTo: query.performedTo === undefined ? undefined : new Date(query.performedTo),
      after,
      take: query.limit + 1,
    });
    const page = toPage(rows, query.limit, (c) => encodeCursor(c.performedAt.toISOString(), c.id));
    const factors = await this.calibrations.factorsOf(
      this.prisma,
      page.items.map((c) => c.id),
    );
    return { items: page.items.map((c) => presentSummary(c, factors.get(c.id) ?? null)), nextCursor: page.nextCursor };
  }

  async get(ctx: RequestContext, id: string): Promise<CalibrationView> {
    const cal = await this.calibrations.findById(this.prisma, id);
    if (!cal) throw notFound();
    assertCanRead(ctx.actor, cal);
    const factors = await this.calibrations.factorsOf(this.prisma, [id]);
    return presentCalibration(cal, factors.get(id) ?? null);
  }

  async update(ctx: RequestContext, id: string, ifMatch: string | undefined, patch: UpdateCalibration): Promise<CalibrationView> {
    return this.prisma.$transaction(async (tx) => {
      const cal = await this.calibrations.findById(tx, id);
      if (!cal) throw notFound();
      assertCanEdit(ctx.actor, cal);
      const expected = expectedVersion(ifMatch);
      if (expected !== cal.version) throw staleVersion(cal.version);
      assertState(cal, ['draft', 'returned'], 'changed');
      const vessel = await this.items.existingVessel(tx, cal.vesselId);
      const { balance } = await this.items.instrumentsOf(
        tx,
        cal.labId,
        patch.balanceId ?? cal.balanceId,
        patch.thermometerId ?? cal.thermometerId,
      );
      const now = this.clock.now();
      const performedAt = patch.performedAt === undefined ? cal.performedAt : new Date(patch.performedAt);
      assertNotInFuture(performedAt, now);
      const inputs = checkedInputs(enteredFromPatch(cal.inputs, patch), { ...vessel, deliveryMode: cal.deliveryMode });
      computeCalibration(inputs, subjectOf(vessel, balance, cal.deliveryMode), now);
      const changes: DraftChanges = {
        ...(patch.balanceId === undefined ? {} : { balanceId: patch.balanceId }),
        ...(patch.thermometerId === undefined ? {} : { thermometerId: patch.thermometerId }),
        ...(patch.notes === undefined ? {} : { notes: patch.notes }),
        performedAt,
        inputs,
      };
      const updated = await this.calibrations.updateDraft(tx, id, expected, changes, now);
      if (!updated) throw staleVersion();
      await this.audit.record(tx, ctx, {
        action: 'update',
        entityType: 'calibration',
        entityId: id,
        labId: cal.labId,
        oldValues: auditSnapshot(cal),
        newValues: auditSnapshot(updated),
      });
      return presentCalibration(updated, null);
    }, TX);
  }

  /** A manager (or administrator) enters a calibration for an active analyst or manager of the lab. */
  private async assertPerformer(tx: Tx, ctx: RequestContext, labId: string, performerId: string): Promise<void> {
    assertCanRecordFor(ctx.actor, labId);
    if (await this.facts.activeMemberRole(tx, labId, performerId)) return;
    throw new DomainError('validation-failed', 'The performer is not an active analyst or manager of the vessel’s lab.', [
      { field: 'performerId', reason: 'is not an active analyst or manager of the vessel’s lab' },
    ]);
  }
}

const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;

/** The (performedAt, id) a page continues after. */
function cursorAfter(cursor: { sortValue: string | null; id: string }): { performedAt: Date; id: string } {
  const at = cursorInstant(cursor.sortValue);
  if (!UUID.test(cursor.id)) {
    throw new DomainError('validation-failed', 'The cursor is not one this API issued.', [{ field: 'cursor', reason: 'invalid cursor' }]);
  }
  return { performedAt: at, id: cursor.id };
}
