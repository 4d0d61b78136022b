import { randomUUID } from 'node:crypto';

import { Injectable } from '@nestjs/common';

import type { RequestContext } from '../auth/actor';
import { Clock } from '../common/clock';
import { DomainError } from '../common/problem/domain-error';
import { recordCreations } from '../inventory/bulk-audit';
import { CsvSyntaxError, parseCsv } from '../inventory/csv';
import { assertCanCreate } from '../inventory/inventory-access';
import { isUniqueViolation } from '../common/db';
import type { VesselRecord } from './vessel.repository';
import { newVessel, VESSEL } from './vessel.service';
import {
  IMPORT_COLUMNS,
  type ImportError,
  MAX_IMPORT_ROWS,
  MAX_REPORTED_ERRORS,
  REQUIRED_COLUMNS,
  type VesselImportResult,
} from './vessel-import.schemas';
import { VesselImportRepository } from './vessel-import.repository';
import { RowParser } from './vessel-import.rows';

interface CheckedRow {
  readonly row: number;
  readonly vessel: VesselRecord;
}

/**
 * Bulk import of vessels from CSV: the file is checked as a whole with the
 * create rules, then either every row is stored (one transaction, batched
 * inserts, one audit entry per vessel) or none, with a row-by-row report.
 */
@Injectable()
export class VesselImportService {
  constructor(
    private readonly clock: Clock,
    private readonly bulk: VesselImportRepository,
  ) {}

  async import(ctx: RequestContext, labId: string, body: unknown): Promise<VesselImportResult> {
    assertCanCreate(ctx.actor, labId);
    if (typeof body !== 'string') {
      throw new DomainError('unsupported-media-type', 'Send the file as the request body with Content-Type: text/csv.');
    }
    const { rows, errors } = checkFile(body, labId, this.clock.now());
    if (errors.length === 0) {
      const taken = await this.bulk.registeredTags(rows.map((r) => r.vessel.assetTag));
      for (const { row, vessel } of rows) {
        if (taken.has(vessel.assetTag)) errors.push({ row, field: 'assetTag', reason: `${vessel.assetTag} is already registered` });
      }
    }
    if (errors.length > 0) throw refused(errors);

    const vessels = rows.map((r) => r.vessel);
    try {
      await this.bulk.transaction(async (client) => {
        const lab = await this.bulk.labState(client, labId);
        if (lab === 'missing') throw new DomainError('not-found', 'No lab with that id.');
        if (lab === 'retired') {
          throw new DomainError('conflict', 'The lab is retired; it takes no new items.', [{ field: 'labId', reason: 'lab is retired' }]);
        }
        await this.bulk.insertAll(client, vessels);
        await recordCreations(
          client,
          ctx,
          { entityType: VESSEL.entityType, labId, reason: `CSV import of ${vessels.length} vessels` },
          vessels.map((v) => ({ entityId: v.id, newValues: v })),
        );
      });
    } catch (error) {
      // Registered by someone else between the check and the insert.
      if (isUniqueViolation(error)) {
        throw new DomainError('conflict', 'An asset tag in the file was registered meanwhile; nothing was imported. Send the file again.', [
          { field: 'assetTag', reason: 'is already used by another item' },
        ]);
      }
      throw error;
    }
    return { labId, imported: rows.length, vessels: rows.map((r) => ({ row: r.row, id: r.vessel.id, assetTag: r.vessel.assetTag })) };
  }
}

function refused(errors: ImportError[]): DomainError {
  const sorted = [...errors].sort((a, b) => a.row - b.row);
  return new DomainError(
    'unprocessable-quantity',
    `The file was not imported: ${errors.length} problem(s). Nothing was stored; fix the rows listed and send the whole file again.`,
    sorted.slice(0, MAX_REPORTED_ERRORS),
    { totalErrors: errors.length },
  );
}

/** Parses and checks every row; complete records for the good rows, errors for the rest. */
export function checkFile(csv: string, labId: string, now: Date): { rows: CheckedRow[]; errors: ImportError[] } {
  let records: string[][];
  try {
    records = parseCsv(csv);
  } catch (error) {
    if (error instanceof CsvSyntaxError) return { rows: [], errors: [{ row: error.row, field: '(file)', reason: error.reason }] };
    throw error;
  }
  const header = records[0]?.map((h) => h.trim()) ?? [];
  const errors = checkHeader(header);
  if (records.length < 2) errors.push({ row: 1, field: '(file)', reason: 'has no data rows' });
  if (records.length - 1 > MAX_IMPORT_ROWS) errors.push({ row: 1, field: '(file)', reason: `has more than ${MAX_IMPORT_ROWS} data rows` });
  if (errors.length > 0) return { rows: [], errors };

  const parser = new RowParser(header);
  const rows: CheckedRow[] = [];
  const firstRowOfTag = new Map<string, number>();
  const createdAt = now.toISOString();
  records.slice(1).forEach((cells, index) => {
    const row = index + 2;
    if (cells.length !== header.length) {
      errors.push({ row, field: '(row)', reason: `has ${cells.length} fields; the header has ${header.length}` });
      return;
    }
    const tag = parser.assetTag(cells);
    if (tag !== '') {
      const first = firstRowOfTag.get(tag);
      if (first !== undefined) errors.push({ row, field: 'assetTag', reason: `${tag} is repeated (first in row ${first})` });
      else firstRowOfTag.set(tag, row);
    }
    const parsed = parser.parse(cells);
    if ('errors' in parsed) {
      for (const e of parsed.errors) errors.push({ row, ...e });
      return;
    }
    const checked = newVessel(labId, parsed.value);
    if ('errors' in checked) {
      for (const e of checked.errors) errors.push({ row, ...e });
      return;
    }
    rows.push({ row, vessel: { ...checked.vessel, id: randomUUID(), version: 1, createdAt, updatedAt: createdAt } });
  });
  return { rows, errors };
}

function checkHeader(header: readonly string[]): ImportError[] {
  const errors: ImportError[] = [];
  const known = IMPORT_COLUMNS as readonly string[];
  const seen = new Set<string>();
  for (const column of header) {
    if (!known.includes(column)) errors.push({ row: 1, field: column || '(empty)', reason: `is not a column; use ${known.join(', ')}` });
    else if (seen.has(column)) errors.push({ row: 1, field: column, reason: 'appears twice' });
    seen.add(column);
  }
  for (const column of REQUIRED_COLUMNS) {
    if (!seen.has(column)) errors.push({ row: 1, field: column, reason: 'is a required column' });
  }
  return errors;
}
