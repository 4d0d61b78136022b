import { Injectable } from '@nestjs/common';
import type { Prisma } from '@registry/data';

import type { Db } from '../common/db';
import type { ExportFormat, ReportKind } from './export.schemas';

export type ExportState = 'streaming' | 'completed' | 'aborted';

export interface ExportRecord {
  readonly id: string;
  readonly report: ReportKind;
  readonly format: ExportFormat;
  readonly requestedById: string;
  readonly allLabs: boolean;
  readonly labIds: readonly string[];
  readonly periodFrom: Date;
  readonly periodTo: Date;
  readonly asOf: Date;
  readonly parameters: unknown;
  readonly state: ExportState;
  readonly startedAt: Date;
  readonly endedAt: Date | null;
  readonly rowCount: number | null;
  readonly byteCount: number | null;
  readonly sha256: string | null;
  readonly summary: unknown;
  readonly requestId: string | null;
}

export interface NewExport {
  readonly report: ReportKind;
  readonly format: ExportFormat;
  readonly requestedById: string;
  readonly allLabs: boolean;
  readonly labIds: readonly string[];
  readonly periodFrom: Date;
  readonly periodTo: Date;
  readonly asOf: Date;
  readonly parameters: Prisma.InputJsonValue;
  readonly summary: Prisma.InputJsonValue;
  readonly requestId: string;
}

export interface ExportEnd {
  readonly state: 'completed' | 'aborted';
  readonly rows: number;
  readonly bytes: number;
  readonly sha256: Buffer | null;
}

/** Who may see which exports: every one, or those whose labs all lie in a list. */
export type ExportScope = 'all' | readonly string[];

type Row = Prisma.ExportGetPayload<object>;

function toRecord(r: Row): ExportRecord {
  return {
    id: r.id,
    report: r.report as ReportKind,
    format: r.format as ExportFormat,
    requestedById: r.requestedById,
    allLabs: r.allLabs,
    labIds: r.labIds,
    periodFrom: r.periodFrom,
    periodTo: r.periodTo,
    asOf: r.asOf,
    parameters: r.parameters,
    state: r.state as ExportState,
    startedAt: r.startedAt,
    endedAt: r.endedAt,
    rowCount: r.rowCount === null ? null : Number(r.rowCount),
    byteCount: r.byteCount === null ? null : Number(r.byteCount),
    sha256: r.sha256 === null ? null : Buffer.from(r.sha256).toString('hex'),
    summary: r.summary,
    requestId: r.requestId,
  };
}

@Injectable()
export class ExportRepository {
  async insert(db: Db, e: NewExport, now: Date): Promise<ExportRecord> {
    const row = await db.export.create({ data: { ...e, labIds: [...e.labIds], startedAt: now } });
    return toRecord(row);
  }

  /** Ends a streaming export once; the database refuses any later change. */
  async end(db: Db, id: string, end: ExportEnd, now: Date): Promise<ExportRecord> {
    const row = await db.export.update({
      where: { id },
      data: {
        state: end.state,
        endedAt: now,
        rowCount: BigInt(end.rows),
        byteCount: BigInt(end.bytes),
        sha256: end.sha256 === null ? null : new Uint8Array(end.sha256),
      },
    });
    return toRecord(row);
  }

  async findById(db: Db, id: string): Promise<ExportRecord | null> {
    const row = await db.export.findUnique({ where: { id } });
    return row && toRecord(row);
  }

  /**
   * Newest first; `after` continues a page. In a lab scope, only exports confined to those labs
   * (an export of every lab, or one naming any other lab, is not the scope's to see).
   */
  async page(
    db: Db,
    scope: ExportScope,
    filter: { report?: ReportKind | undefined; state?: ExportState | undefined },
    limit: number,
    after: { startedAt: Date; id: string } | null,
  ): Promise<ExportRecord[]> {
    const ids = await db.$queryRaw<{ id: string }[]>`
      SELECT id::text FROM exports
       WHERE (${scope === 'all'} OR (NOT all_labs AND lab_ids <@ ${scope === 'all' ? [] : [...scope]}::uuid[]))
         AND (${filter.report ?? null}::text IS NULL OR report = ${filter.report ?? null})
         AND (${filter.state ?? null}::text IS NULL OR state = ${filter.state ?? null})
         AND (${after?.startedAt ?? null}::timestamptz IS NULL OR (started_at, id) < (${after?.startedAt ?? null}, ${after?.id ?? null}::uuid))
       ORDER BY started_at DESC, id DESC
       LIMIT ${limit}`;
    const rows = await db.export.findMany({
      where: { id: { in: ids.map((r) => r.id) } },
      orderBy: [{ startedAt: 'desc' }, { id: 'desc' }],
    });
    return rows.map(toRecord);
  }

  async findByDigest(db: Db, sha256: Buffer): Promise<ExportRecord[]> {
    const rows = await db.export.findMany({
      where: { sha256: new Uint8Array(sha256), state: 'completed' },
      orderBy: [{ startedAt: 'asc' }, { id: 'asc' }],
    });
    return rows.map(toRecord);
  }
}
