import type { FieldError } from '../common/problem/problem-catalog';
import { type VesselFields, VesselFieldsSchema } from './vessel.schemas';
import { IMPORT_COLUMNS } from './vessel-import.schemas';

type Shape = typeof VesselFieldsSchema.shape;
type Column = keyof Shape;
type CellResult = { readonly ok: true; readonly value: unknown } | { readonly ok: false; readonly reasons: readonly string[] };

const SHAPE: Shape = VesselFieldsSchema.shape;
/** Members the create schema cannot do without. */
const REQUIRED: readonly Column[] = IMPORT_COLUMNS.filter((c) => !SHAPE[c].safeParse(undefined).success);

/**
 * CSV rows through the members of the create schema (VesselFieldsSchema), one
 * cell at a time. The header check has already refused unknown columns (the
 * one object-level rule of the strict schema), so this is the same check as
 * POST /v1/vessels. Results are memoised per column and value: an inventory
 * repeats its kinds, sizes, classes, materials and places.
 */
export class RowParser {
  private readonly memo = new Map<string, CellResult>();
  private readonly tagIndex: number;

  /** `header`: checked column names. */
  constructor(private readonly header: readonly string[]) {
    this.tagIndex = header.indexOf('assetTag');
  }

  /** The row's asset tag as written (trimmed), for duplicate detection. */
  assetTag(cells: readonly string[]): string {
    return (cells[this.tagIndex] ?? '').trim();
  }

  /** Empty cells are members left out; spaces around a value are ignored. */
  parse(cells: readonly string[]): { value: VesselFields } | { errors: FieldError[] } {
    const value: Record<string, unknown> = {};
    const errors: FieldError[] = [];
    this.header.forEach((column, i) => {
      const text = (cells[i] ?? '').trim();
      if (text === '') return;
      const result = this.cell(column as Column, text);
      if (result.ok) value[column] = result.value;
      else for (const reason of result.reasons) errors.push({ field: column, reason });
    });
    for (const column of REQUIRED) {
      if (!(column in value) && !errors.some((e) => e.field === column)) errors.push({ field: column, reason: 'is required' });
    }
    return errors.length > 0 ? { errors } : { value: value as VesselFields };
  }

  private cell(column: Column, text: string): CellResult {
    const key = `${column}\u0000${text}`;
    const known = this.memo.get(key);
    if (known) return known;
    const parsed = SHAPE[column].safeParse(text);
    const result: CellResult = parsed.success
      ? { ok: true, value: parsed.data }
      : { ok: false, reasons: parsed.error.issues.map((i) => i.message) };
    // Tags are unique: nothing to gain from remembering them.
    if (column !== 'assetTag') this.memo.set(key, result);
    return result;
  }
}
