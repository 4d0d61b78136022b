import { Injectable } from '@nestjs/common';
import { PrismaClient } from '@registry/data';

import { AuditWriter } from '../audit/audit-writer';
import { assertLabManager } from '../auth/access-policy';
import type { RequestContext } from '../auth/actor';
import { Clock } from '../common/clock';
import { staleVersion } from '../common/http/concurrency';
import { DomainError } from '../common/problem/domain-error';
import { InstrumentRepository } from '../instruments/instrument.repository';
import { invalid } from '../inventory/inventory.errors';
import { ImpactService } from './impact.service';
import { startOfLocalDay } from './lab-calendar';
import type { OutOfToleranceRequest, OutOfToleranceResponse } from './out-of-tolerance.schemas';
import { OutOfToleranceRepository } from './out-of-tolerance.repository';

const FUTURE_SKEW_MS = 5 * 60_000;
const TX = { maxWait: 5_000, timeout: 15_000 } as const;

/**
 * An environment instrument found out of tolerance (the lab's managers,
 * administrators): one transaction quarantines it if it was in service, audits
 * the finding, and marks for review the current factors made from calibrations
 * that used it as thermometer since the first day of its last calibration (in
 * the lab's time zone; every calibration on record when none is). A retired or
 * already quarantined instrument keeps its status: the finding still counts,
 * e.g. when its final calibration shows it had drifted.
 */
@Injectable()
export class OutOfToleranceService {
  constructor(
    private readonly prisma: PrismaClient,
    private readonly clock: Clock,
    private readonly audit: AuditWriter,
    private readonly instruments: InstrumentRepository,
    private readonly repository: OutOfToleranceRepository,
    private readonly impact: ImpactService,
  ) {}

  async report(ctx: RequestContext, instrumentId: string, body: OutOfToleranceRequest): Promise<OutOfToleranceResponse> {
    const now = this.clock.now();
    const foundAt = new Date(body.foundAt);
    if (foundAt.getTime() > now.getTime() + FUTURE_SKEW_MS) {
      throw invalid('foundAt', 'must not be in the future (at most 5 minutes ahead of the server clock)');
    }
    return this.prisma.$transaction(async (tx) => {
      const seen = await this.instruments.findById(tx, instrumentId);
      if (!seen) throw new DomainError('not-found', 'No instrument with that id.');
      assertLabManager(ctx.actor, seen.labId, 'instrument');
      await this.repository.lockInstrument(tx, instrumentId);
      const instrument = (await this.instruments.findById(tx, instrumentId)) ?? seen;
      const timeZone = await this.repository.labTimeZone(tx, instrument.labId);

      const since = instrument.calibrationDate === null ? null : startOfLocalDay(instrument.calibrationDate, timeZone);
      const quarantine = instrument.status === 'in-service';
      const updated = quarantine
        ? await this.instruments.update(tx, instrument.id, instrument.version, { status: 'quarantined' }, now)
        : instrument;
      if (!updated) throw staleVersion();
      const statusReason = quarantine
        ? 'Quarantined: found out of tolerance.'
        : `Already ${instrument.status}; the finding is recorded and its impact marked.`;
      await this.audit.record(tx, ctx, {
        action: 'out-of-tolerance',
        entityType: 'instrument',
        entityId: instrument.id,
        labId: instrument.labId,
        oldValues: { status: instrument.status, version: instrument.version },
        // `since` keeps the finding's reach: a calibration approved later is checked against it (factor-issuer.ts).
        newValues: {
          status: updated.status,
          version: updated.version,
          foundAt: foundAt.toISOString(),
          since: since?.toISOString() ?? null,
        },
        reason: body.reason,
      });
      const impactReason =
        `${instrument.assetTag} found out of tolerance at ${foundAt.toISOString()} (${body.reason}): ` +
        'calibrations that used it since its last calibration need review';
      const impact = await this.impact.forInstrument(tx, ctx, instrument.id, since, impactReason);
      return {
        instrument: {
          id: instrument.id,
          assetTag: instrument.assetTag,
          kind: instrument.kind,
          calibrationDate: instrument.calibrationDate,
        },
        foundAt: foundAt.toISOString(),
        reason: body.reason,
        status: { before: instrument.status, after: updated.status, reason: statusReason },
        impact,
      };
    }, TX);
  }
}
