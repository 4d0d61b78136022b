import { createHash } from 'node:crypto';

import { Injectable, Logger } from '@nestjs/common';
import { PrismaClient } from '@registry/data';
import { Pool, type PoolClient } from 'pg';

import { type ChainReport, verifyChain } from '../audit-trail/chain-verifier';
import { AuditWriter } from '../audit/audit-writer';
import { canReadLab } from '../auth/access-policy';
import type { Actor, PersonActor, RequestContext } from '../auth/actor';
import { Clock } from '../common/clock';
import { cursorInstant, decodeCursor, encodeCursor, type Page, toPage } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import { invalid } from '../inventory/inventory.errors';
import { type ExportScope, ExportRepository, type ExportRecord } from './export.repository';
import type { CreateExport, ExportFormat, ExportListQuery } from './export.schemas';
import { ExportStream } from './export-stream';
import { type ExportView, type Requester, toExportView } from './export.presenter';
import { PdfReportWriter } from './pdf-writer';
import { REPORTS, type ReportDefinition } from './report-catalog';
import { ITEM_STATES_SQL } from './report-sql';
import { csvWriter, ndjsonWriter, type RowWriter } from './row-formats';

const TX = { maxWait: 5_000, timeout: 15_000 } as const;
/** An as-of instant may be this far ahead of the server clock (clocks drift); later is the future. */
const AS_OF_SKEW_MS = 5_000;

export const CONTENT_TYPES: Readonly<Record<ExportFormat, string>> = {
  csv: 'text/csv; charset=utf-8; header=present',
  ndjson: 'application/x-ndjson; charset=utf-8',
  pdf: 'application/pdf',
};

interface LabRef {
  readonly id: string;
  readonly code: string;
  readonly name: string;
}

/** An export under way: its record, the bytes to send, and what to call when the response has ended. */
export interface StartedExport {
  readonly record: ExportRecord;
  readonly body: NodeJS.ReadableStream;
  readonly contentType: string;
  readonly fileName: string;
  readonly chain: ChainReport | null;
  /** The response ended: `delivered` when every byte was handed over. Records the outcome once. */
  settle(delivered: boolean): Promise<void>;
}

export interface Verification {
  readonly sha256: string;
  readonly issued: boolean;
  readonly exports: ExportView[];
}

/**
 * Who may export: administrators and auditors every lab; lab managers the labs they manage;
 * nobody else.
 */
function exportScope(actor: Actor): ExportScope {
  if (actor.kind === 'person' && actor.registryRole) return 'all';
  if (actor.kind === 'person') {
    const managed = [...actor.labs].filter(([, role]) => role === 'manager').map(([labId]) => labId);
    if (managed.length > 0) return managed;
  }
  throw new DomainError('forbidden', 'Only administrators, auditors and lab managers may export or verify compliance reports.');
}

/**
 * Compliance exports: checks who may export what, records the export and its audit entry,
 * streams the report (export-stream.ts) and records how it ended with the SHA-256 of the bytes
 * delivered; lists exports and says whether a digest or a file was issued by the registry.
 */
@Injectable()
export class ExportService {
  private readonly logger = new Logger('Exports');

  constructor(
    private readonly prisma: PrismaClient,
    private readonly pool: Pool,
    private readonly clock: Clock,
    private readonly audit: AuditWriter,
    private readonly exports: ExportRepository,
  ) {}

  async start(ctx: RequestContext, body: CreateExport): Promise<StartedExport> {
    const scope = exportScope(ctx.actor);
    const actor = ctx.actor as PersonActor;
    const now = this.clock.now();
    const asOf = body.asOf === undefined ? now : new Date(body.asOf);
    if (asOf.getTime() > now.getTime() + AS_OF_SKEW_MS) throw invalid('asOf', 'must not be in the future');
    const { allLabs, labs } = await this.labsFor(ctx.actor, scope, body.labIds);
    const report = REPORTS[body.report];
    const from = new Date(body.from);
    const to = new Date(body.to);
    const chain = body.report === 'audit-trail' ? await verifyChain(this.pool, { occurredUpTo: asOf }) : null;
    const labIds = allLabs ? [] : labs.map((l) => l.id);
    const parameters = {
      report: body.report,
      format: body.format,
      labIds: allLabs ? 'all' : labIds,
      from: from.toISOString(),
      to: to.toISOString(),
      asOf: asOf.toISOString(),
    };
    const record = await this.prisma.$transaction(async (tx) => {
      const created = await this.exports.insert(
        tx,
        {
          report: body.report,
          format: body.format,
          requestedById: actor.id,
          allLabs,
          labIds,
          periodFrom: from,
          periodTo: to,
          asOf,
          parameters,
          summary: chain ? { auditChain: { ...chain } } : {},
          requestId: ctx.requestId,
        },
        now,
      );
      await this.audit.record(tx, ctx, {
        action: 'export',
        entityType: 'export',
        entityId: created.id,
        labId: labIds.length === 1 ? labIds[0] : null,
        newValues: { ...parameters, state: 'streaming' },
      });
      return created;
    }, TX);

    const requester = { displayName: actor.displayName, email: actor.email };
    let settled: Promise<void> | null = null;
    const stream: ExportStream = new ExportStream(this.pool, {
      exportId: record.id,
      sql: report.sql,
      params: [allLabs, labIds, from, to, asOf],
      writer: (client) => this.writerFor(client, body.format, report, { labs, allLabs, from, to, asOf, requester, chain, labIds }),
      completed: () => settle(true),
    });
    /** Records how the export ended, once: completed (every byte handed over) or aborted. */
    const settle = (delivered: boolean): Promise<void> => {
      settled ??= (async () => {
        if (!delivered) await stream.cancel();
        const outcome = stream.outcome();
        const state = delivered && outcome.sha256 !== null ? 'completed' : 'aborted';
        await this.prisma.$transaction(async (tx) => {
          const ended = await this.exports.end(
            tx,
            record.id,
            { state, ...outcome, sha256: state === 'completed' ? outcome.sha256 : null },
            this.clock.now(),
          );
          await this.audit.record(tx, ctx, {
            action: state === 'completed' ? 'export-completed' : 'export-aborted',
            entityType: 'export',
            entityId: record.id,
            labId: labIds.length === 1 ? labIds[0] : null,
            oldValues: { state: 'streaming' },
            newValues: { state, rowCount: ended.rowCount, byteCount: ended.byteCount, sha256: ended.sha256 },
          });
        }, TX);
      })().catch((err: unknown) => this.logger.error(`export ${record.id}: could not record its end: ${String(err)}`));
      return settled;
    };
    let body$: NodeJS.ReadableStream;
    try {
      body$ = await stream.open();
    } catch (err) {
      await settle(false);
      throw err;
    }
    return {
      record,
      body: body$,
      contentType: CONTENT_TYPES[body.format],
      fileName: fileName(body.report, body.format, allLabs ? null : labs, asOf),
      chain,
      settle,
    };
  }

  async list(ctx: RequestContext, query: ExportListQuery): Promise<Page<ExportView>> {
    const scope = exportScope(ctx.actor);
    const after = query.cursor === undefined ? null : decodeExportCursor(query.cursor);
    const rows = await this.exports.page(this.prisma, scope, { report: query.report, state: query.state }, query.limit + 1, after);
    const page = toPage(rows, query.limit, (r) => encodeCursor(r.startedAt.toISOString(), r.id));
    return { items: await this.present(page.items), nextCursor: page.nextCursor };
  }

  async get(ctx: RequestContext, id: string): Promise<ExportView> {
    const scope = exportScope(ctx.actor);
    const record = await this.exports.findById(this.prisma, id);
    if (!record || !inScope(scope, record)) throw new DomainError('not-found', 'No export with that id.');
    return (await this.present([record]))[0] as ExportView;
  }

  /** Whether the registry issued a file with this SHA-256 (only exports the caller may see are named). */
  async verifyDigest(ctx: RequestContext, sha256Hex: string): Promise<Verification> {
    const scope = exportScope(ctx.actor);
    const digest = Buffer.from(sha256Hex.toLowerCase(), 'hex');
    const matches = (await this.exports.findByDigest(this.prisma, digest)).filter((r) => inScope(scope, r));
    return { sha256: digest.toString('hex'), issued: matches.length > 0, exports: await this.present(matches) };
  }

  /** The same for an uploaded file: its SHA-256 is computed here. */
  verifyFile(ctx: RequestContext, bytes: Buffer): Promise<Verification> {
    return this.verifyDigest(ctx, createHash('sha256').update(bytes).digest('hex'));
  }

  private async present(records: readonly ExportRecord[]): Promise<ExportView[]> {
    const ids = [...new Set(records.map((r) => r.requestedById))];
    const people = await this.prisma.person.findMany({ where: { id: { in: ids } }, select: { id: true, email: true, displayName: true } });
    const byId = new Map<string, Requester>(people.map((p) => [p.id, p]));
    return records.map((r) => toExportView(r, byId.get(r.requestedById) ?? { id: r.requestedById, email: '', displayName: '' }));
  }

  private async labsFor(
    actor: Actor,
    scope: ExportScope,
    asked: readonly string[] | undefined,
  ): Promise<{ allLabs: boolean; labs: LabRef[] }> {
    const select = { id: true, code: true, name: true } as const;
    if (asked === undefined) {
      const labs = await this.prisma.lab.findMany({
        where: scope === 'all' ? {} : { id: { in: [...scope] } },
        select,
        orderBy: { code: 'asc' },
      });
      return { allLabs: scope === 'all', labs };
    }
    const ids = asked.map((id) => id.toLowerCase());
    const found = await this.prisma.lab.findMany({ where: { id: { in: ids } }, select, orderBy: { code: 'asc' } });
    for (const id of ids) {
      if (!found.some((l) => l.id === id) || !canReadLab(actor, id)) {
        throw new DomainError('not-found', `No lab with id ${id}.`, [{ field: 'labIds', reason: `no lab ${id}` }]);
      }
      if (scope !== 'all' && !scope.includes(id)) {
        throw new DomainError('forbidden', 'Lab managers export the labs they manage only.', [
          { field: 'labIds', reason: `you do not manage lab ${id}` },
        ]);
      }
    }
    return { allLabs: false, labs: found };
  }

  private async writerFor(
    client: PoolClient,
    format: ExportFormat,
    report: ReportDefinition,
    f: {
      labs: readonly LabRef[];
      allLabs: boolean;
      labIds: readonly string[];
      from: Date;
      to: Date;
      asOf: Date;
      requester: { displayName: string; email: string };
      chain: ChainReport | null;
    },
  ): Promise<RowWriter> {
    if (format === 'csv') return csvWriter(report.columns);
    if (format === 'ndjson') return ndjsonWriter(report.columns);
    const params = [f.allLabs, f.labIds, f.from, f.to, f.asOf];
    const rowsPerLab = await client.query<{ lab: string; rows: number }>(
      `SELECT "lab", count(*)::int AS rows FROM (${report.sql}) r GROUP BY "lab" ORDER BY "lab"`,
      params,
    );
    const itemStates = await client.query<{ lab: string; status: string; items: number }>(ITEM_STATES_SQL, params);
    return new PdfReportWriter({
      report,
      labs: f.labs,
      allLabs: f.allLabs,
      from: f.from,
      to: f.to,
      asOf: f.asOf,
      requestedBy: f.requester,
      rowsPerLab: rowsPerLab.rows.map((r) => ({ lab: r.lab ?? '(no lab)', rows: r.rows })),
      itemStates: itemStates.rows,
      chain: f.chain,
    });
  }
}

function inScope(scope: ExportScope, record: ExportRecord): boolean {
  return scope === 'all' || (!record.allLabs && record.labIds.every((id) => scope.includes(id)));
}

function fileName(report: string, format: ExportFormat, labs: readonly LabRef[] | null, asOf: Date): string {
  const where = labs === null ? 'all-labs' : labs.length <= 3 ? labs.map((l) => l.code).join('+') : `${labs.length}-labs`;
  const at = asOf
    .toISOString()
    .replace(/[-:]/g, '')
    .replace(/\.\d{3}Z$/, 'Z');
  return `${report}_${where}_${at}.${format}`;
}

function decodeExportCursor(cursor: string): { startedAt: Date; id: string } {
  const { sortValue, id } = decodeCursor(cursor);
  return { startedAt: cursorInstant(sortValue), id };
}
