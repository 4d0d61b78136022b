import type { ExportRecord } from './export.repository';

export interface Requester {
  readonly id: string;
  readonly email: string;
  readonly displayName: string;
}

/** An export as the API shows it: what was asked, by whom, when it ran and how it ended. */
export interface ExportView {
  readonly id: string;
  readonly report: string;
  readonly format: string;
  readonly labIds: readonly string[] | 'all';
  readonly from: string;
  readonly to: string;
  readonly asOf: string;
  readonly requestedBy: Requester;
  readonly state: string;
  readonly startedAt: string;
  /** When the last byte was delivered (completed) or the client went away (aborted). */
  readonly endedAt: string | null;
  readonly rowCount: number | null;
  readonly byteCount: number | null;
  /** SHA-256 of the bytes delivered, hexadecimal; only for completed exports. */
  readonly sha256: string | null;
  readonly summary: unknown;
}

export function toExportView(r: ExportRecord, requester: Requester): ExportView {
  return {
    id: r.id,
    report: r.report,
    format: r.format,
    labIds: r.allLabs ? 'all' : [...r.labIds],
    from: r.periodFrom.toISOString(),
    to: r.periodTo.toISOString(),
    asOf: r.asOf.toISOString(),
    requestedBy: { id: requester.id, email: requester.email, displayName: requester.displayName },
    state: r.state,
    startedAt: r.startedAt.toISOString(),
    endedAt: r.endedAt?.toISOString() ?? null,
    rowCount: r.rowCount,
    byteCount: r.byteCount,
    sha256: r.sha256,
    summary: r.summary,
  };
}
