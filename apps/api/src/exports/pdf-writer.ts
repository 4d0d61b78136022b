import PDFDocument from 'pdfkit';

import type { ChainReport } from '../audit-trail/chain-verifier';
import type { ReportDefinition } from './report-catalog';
import type { ReportRow, RowWriter } from './row-formats';

/** What the title and summary pages say besides the rows. */
export interface PdfFrame {
  readonly report: ReportDefinition;
  readonly labs: readonly { readonly code: string; readonly name: string }[];
  readonly allLabs: boolean;
  readonly from: Date;
  readonly to: Date;
  readonly asOf: Date;
  readonly requestedBy: { readonly displayName: string; readonly email: string };
  readonly rowsPerLab: readonly { readonly lab: string; readonly rows: number }[];
  readonly itemStates: readonly { readonly lab: string; readonly status: string; readonly items: number }[];
  readonly chain: ChainReport | null;
}

export const PDF_CAUTION =
  'The registry supports, and does not replace, the laboratory’s quality system, accredited calibration of balances ' +
  'and weights, and local rules. Results are only as good as the procedure and the data entered; where a result ' +
  'decides whether equipment may be used, a qualified person decides.';

export const PDF_TIME_NOTE =
  'The wall-clock time of this export is kept in the registry’s export record together with the SHA-256 of this file; ' +
  'it is not printed here, so that the same request with the same as-of instant always yields the same file.';

const MARGIN = 36;
const FONT_SIZE = 7;
const ROW_HEIGHT = 11;
const FOOTER_GAP = 22;
const STATE_COLOURS: Record<string, string> = { 'in-service': '#2e7d32', quarantined: '#ef8f00', retired: '#757575' };
const STATE_ORDER = ['in-service', 'quarantined', 'retired'];

/** Characters the standard PDF fonts (WinAnsi) can show; anything else becomes '?'. */
const WIN_ANSI_EXTRA = '€‚ƒ„…†‡ˆ‰Š‹ŒŽ‘’“”•–—˜™š›œžŸ';
export function pdfText(value: string): string {
  let out = '';
  for (const ch of value) {
    const code = ch.codePointAt(0) ?? 0;
    if (code === 9 || code === 10 || code === 13) out += ' ';
    else if ((code >= 0x20 && code <= 0x7e) || (code >= 0xa0 && code <= 0xff) || WIN_ANSI_EXTRA.includes(ch)) out += ch;
    else out += '?';
  }
  return out;
}

const instant = (d: Date) => d.toISOString();

/**
 * A paginated PDF (A4 landscape, built-in Helvetica, no embedded fonts): a title page, a
 * summary page with a bar chart of item states per lab drawn with vector rectangles, then
 * the table, its header repeated on every page, and a page number on every page. The
 * document's dates are the as-of instant, so the same request gives the same bytes.
 */
export class PdfReportWriter implements RowWriter {
  private readonly doc: PDFKit.PDFDocument;
  private readonly columns: { index: number; label: string; width: number }[];
  private page = 0;
  private y = 0;

  constructor(private readonly frame: PdfFrame) {
    this.doc = new PDFDocument({
      size: 'A4',
      layout: 'landscape',
      margins: { top: MARGIN, bottom: MARGIN, left: MARGIN, right: MARGIN },
      autoFirstPage: false,
      compress: true,
      info: {
        Title: `${frame.report.title} as of ${instant(frame.asOf)}`,
        Author: `${frame.requestedBy.displayName} <${frame.requestedBy.email}>`,
        Subject: 'Compliance export of the calibration registry',
        Creator: 'Shared calibration registry',
        Producer: 'Shared calibration registry',
        CreationDate: frame.asOf,
        ModDate: frame.asOf,
      },
    });
    const shown = frame.report.columns.flatMap((c, index) => (c.pdf ? [{ index, ...c.pdf }] : []));
    const total = shown.reduce((sum, c) => sum + c.width, 0);
    const tableWidth = this.pageWidth() - 2 * MARGIN;
    this.columns = shown.map((c) => ({ index: c.index, label: c.label, width: (c.width / total) * tableWidth }));
  }

  begin(): Buffer {
    this.titlePage();
    this.summaryPage();
    this.tablePage();
    return this.drain();
  }

  rows(batch: readonly ReportRow[]): Buffer {
    for (const row of batch) {
      if (this.y + ROW_HEIGHT > this.bottom()) this.tablePage();
      this.drawRow(
        this.columns.map((c) => cellText(row[c.index] ?? null)),
        false,
      );
    }
    return this.drain();
  }

  end(): Buffer {
    if (this.y === this.tableTop()) this.text('No rows.', MARGIN, this.y + 4, { size: 9 });
    this.doc.end();
    return this.drain();
  }

  private drain(): Buffer {
    const chunks: Buffer[] = [];
    for (let chunk = this.doc.read() as Buffer | null; chunk !== null; chunk = this.doc.read() as Buffer | null) chunks.push(chunk);
    return Buffer.concat(chunks);
  }

  private pageWidth(): number {
    return 841.89;
  }
  private pageHeight(): number {
    return 595.28;
  }
  private bottom(): number {
    return this.pageHeight() - MARGIN - FOOTER_GAP;
  }
  private tableTop(): number {
    return MARGIN + 18 + ROW_HEIGHT;
  }

  private newPage(): void {
    this.doc.addPage();
    this.page += 1;
    const f = this.frame;
    const footer = `${f.report.title} · as of ${instant(f.asOf)} · page ${this.page}`;
    // Written inside the bottom margin: lift the margin meanwhile, or PDFKit would start a new page.
    const margin = this.doc.page.margins.bottom;
    this.doc.page.margins.bottom = 0;
    this.text(footer, MARGIN, this.pageHeight() - MARGIN, { size: 7, width: this.pageWidth() - 2 * MARGIN, align: 'right' });
    this.doc.page.margins.bottom = margin;
    this.y = MARGIN;
  }

  private text(
    value: string,
    x: number,
    y: number,
    options: { size?: number; bold?: boolean; width?: number; align?: 'left' | 'right' | 'center'; colour?: string } = {},
  ): void {
    this.doc
      .font(options.bold ? 'Helvetica-Bold' : 'Helvetica')
      .fontSize(options.size ?? 10)
      .fillColor(options.colour ?? '#000000')
      .text(pdfText(value), x, y, {
        lineBreak: options.width !== undefined,
        ...(options.width !== undefined ? { width: options.width } : {}),
        ...(options.align ? { align: options.align } : {}),
      });
  }

  private paragraph(value: string, size = 10, bold = false): void {
    this.text(value, MARGIN, this.y, { size, bold, width: this.pageWidth() - 2 * MARGIN });
    this.y = this.doc.y + 6;
  }

  private titlePage(): void {
    const f = this.frame;
    this.newPage();
    this.y = MARGIN + 60;
    this.paragraph('Shared calibration registry · compliance export', 12);
    this.paragraph(f.report.title, 24, true);
    this.paragraph(f.report.description, 11);
    this.y += 10;
    const labs = f.allLabs
      ? `Every lab of the registry (${f.labs.length}): ${f.labs.map((l) => `${l.code} ${l.name}`).join('; ')}`
      : f.labs.map((l) => `${l.code} ${l.name}`).join('; ');
    for (const [label, value] of [
      ['Labs', labs],
      ['Period', `${instant(f.from)} to ${instant(f.to)} (end excluded)`],
      ['As of', instant(f.asOf)],
      ['Exported by', `${f.requestedBy.displayName} <${f.requestedBy.email}>`],
      ['Time of export', PDF_TIME_NOTE],
    ] as const) {
      this.text(label, MARGIN, this.y, { size: 10, bold: true });
      this.text(value, MARGIN + 110, this.y, { size: 10, width: this.pageWidth() - 2 * MARGIN - 110 });
      this.y = this.doc.y + 6;
    }
    this.y += 14;
    this.paragraph('Caution', 11, true);
    this.paragraph(PDF_CAUTION, 10);
  }

  private summaryPage(): void {
    const f = this.frame;
    this.newPage();
    this.paragraph('Summary', 16, true);
    const total = f.rowsPerLab.reduce((sum, r) => sum + r.rows, 0);
    this.paragraph(`Rows in this report: ${total}`, 11);
    for (const r of f.rowsPerLab) this.paragraph(`${r.lab}: ${r.rows} rows`, 10);
    if (f.chain) {
      const c = f.chain;
      this.y += 6;
      this.paragraph('Audit trail hash chain, verified up to the as-of instant', 11, true);
      this.paragraph(
        c.intact
          ? `Intact: ${c.entriesChecked} entries checked; last entry ${c.head ? `seq ${c.head.seq}, SHA-256 ${c.head.hash}` : 'none'}.`
          : `BROKEN at entry seq ${c.firstBroken?.seq ?? '?'} (${c.firstBroken?.problem ?? 'unknown'}); ${c.entriesChecked} entries checked before it.`,
        10,
      );
    }
    this.y += 10;
    this.paragraph(`Item states per lab as of ${instant(f.asOf)}`, 11, true);
    this.chart();
  }

  /** Horizontal stacked bars, one per lab, scaled to the largest lab; a legend below. */
  private chart(): void {
    const labs = [...new Set(this.frame.itemStates.map((s) => s.lab))];
    if (labs.length === 0) {
      this.paragraph('No items on record.', 10);
      return;
    }
    const count = (lab: string, status: string) =>
      this.frame.itemStates.filter((s) => s.lab === lab && s.status === status).reduce((sum, s) => sum + s.items, 0);
    const statuses = [...STATE_ORDER, ...new Set(this.frame.itemStates.map((s) => s.status).filter((s) => !STATE_ORDER.includes(s)))];
    const largest = Math.max(1, ...labs.map((lab) => statuses.reduce((sum, s) => sum + count(lab, s), 0)));
    const labelWidth = 90;
    const barMax = this.pageWidth() - 2 * MARGIN - labelWidth - 60;
    const barHeight = Math.max(8, Math.min(18, (this.bottom() - this.y - 40) / labs.length - 6));
    for (const lab of labs) {
      if (this.y + barHeight + 40 > this.bottom()) this.newPage();
      this.text(lab, MARGIN, this.y + barHeight / 2 - 4, { size: 9 });
      let x = MARGIN + labelWidth;
      for (const status of statuses) {
        const n = count(lab, status);
        if (n === 0) continue;
        const w = (n / largest) * barMax;
        this.doc.rect(x, this.y, w, barHeight).fill(STATE_COLOURS[status] ?? '#1565c0');
        x += w;
      }
      const labTotal = statuses.reduce((sum, s) => sum + count(lab, s), 0);
      const parts = statuses.filter((s) => count(lab, s) > 0).map((s) => `${s} ${count(lab, s)}`);
      this.text(`${labTotal} (${parts.join(', ')})`, x + 6, this.y + barHeight / 2 - 4, { size: 8 });
      this.y += barHeight + 6;
    }
    this.y += 6;
    let x = MARGIN + labelWidth;
    for (const status of statuses) {
      this.doc.rect(x, this.y, 10, 8).fill(STATE_COLOURS[status] ?? '#1565c0');
      this.text(status, x + 14, this.y, { size: 8 });
      x += 90;
    }
    this.y += 16;
  }

  private tablePage(): void {
    this.newPage();
    this.text(this.frame.report.title, MARGIN, this.y, { size: 10, bold: true });
    this.y += 18;
    this.drawRow(
      this.columns.map((c) => c.label),
      true,
    );
  }

  private drawRow(cells: readonly string[], header: boolean): void {
    if (header) this.doc.rect(MARGIN, this.y - 2, this.pageWidth() - 2 * MARGIN, ROW_HEIGHT).fill('#e0e0e0');
    this.doc
      .font(header ? 'Helvetica-Bold' : 'Helvetica')
      .fontSize(FONT_SIZE)
      .fillColor('#000000');
    let x = MARGIN;
    this.columns.forEach((c, i) => {
      this.doc.text(this.fit(pdfText(cells[i] ?? ''), c.width - 3), x + 1, this.y, { lineBreak: false });
      x += c.width;
    });
    this.y += ROW_HEIGHT;
  }

  /** The text cut to the column width, with an ellipsis when cut. */
  private fit(value: string, width: number): string {
    if (value.length * FONT_SIZE * 0.45 <= width || this.doc.widthOfString(value) <= width) return value;
    let lo = 0;
    let hi = value.length;
    while (lo < hi) {
      const mid = Math.ceil((lo + hi) / 2);
      if (this.doc.widthOfString(`${value.slice(0, mid)}…`) <= width) lo = mid;
      else hi = mid - 1;
    }
    return `${value.slice(0, lo)}…`;
  }
}

function cellText(value: string | boolean | null): string {
  if (value === null) return '';
  if (typeof value === 'boolean') return value ? 'yes' : 'no';
  return value;
}
