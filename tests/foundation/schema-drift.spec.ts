import { Client } from 'pg';

import { COMPATIBLE_TYPES, NATIVE_TYPES, readPrismaSchema } from '../support/prisma-schema';
import { createTestDatabase, type TestDatabase } from '../support/test-database';

interface ColumnRow {
  table_name: string;
  column_name: string;
  data_type: string;
  udt_name: string;
  is_nullable: 'YES' | 'NO';
  column_default: string | null;
  is_identity: 'YES' | 'NO';
}

// The SQL migrations are the source of truth; the Prisma schema must describe
// them exactly, or the client would read and write columns that do not exist.
describe('Prisma schema and migrated database', () => {
  const schema = readPrismaSchema();
  let db: TestDatabase;
  let columns: Map<string, ColumnRow>;

  beforeAll(async () => {
    db = await createTestDatabase();
    const client = new Client({ connectionString: db.url });
    await client.connect();
    const rows = (
      await client.query<ColumnRow>(
        `SELECT table_name, column_name, data_type, udt_name, is_nullable, column_default, is_identity
           FROM information_schema.columns WHERE table_schema = 'public'`,
      )
    ).rows;
    await client.end();
    columns = new Map(rows.map((r) => [`${r.table_name}.${r.column_name}`, r]));
  });
  afterAll(() => db.drop());

  it('describes at least one model', () => {
    expect(schema.models.length).toBeGreaterThan(0);
  });

  it.each(schema.models.flatMap((m) => m.fields.map((f) => [`${m.name}.${f.name}`, m.table, f] as const)))(
    'maps %s to a column of compatible type and nullability',
    (_label, table, field) => {
      const column = columns.get(`${table}.${field.column}`);
      expect(column).toBeDefined();
      if (!column) return;
      expect({ field: field.name, nullable: column.is_nullable === 'YES' }).toEqual({ field: field.name, nullable: field.optional });
      const enumType = schema.enums.get(field.type);
      if (enumType) {
        expect(column.udt_name).toBe(enumType);
      } else if (field.list) {
        expect(column.data_type).toBe('ARRAY');
      } else {
        expect(COMPATIBLE_TYPES[field.type]).toContain(column.data_type);
        if (field.nativeType && NATIVE_TYPES[field.nativeType]) expect(column.data_type).toBe(NATIVE_TYPES[field.nativeType]);
      }
    },
  );

  it('models every table the migrations create', () => {
    const modelled = new Set(schema.models.map((m) => m.table));
    const tables = new Set([...columns.values()].map((c) => c.table_name));
    tables.delete('_prisma_migrations');
    expect([...tables].filter((t) => !modelled.has(t)).sort()).toEqual([]);
  });

  it('has no required column without a default that the Prisma model leaves out', () => {
    const modelled = new Set(schema.models.flatMap((m) => m.fields.map((f) => `${m.table}.${f.column}`)));
    const tables = new Set(schema.models.map((m) => m.table));
    const missing = [...columns.values()]
      .filter((c) => tables.has(c.table_name) && c.is_nullable === 'NO' && c.column_default === null && c.is_identity === 'NO')
      .map((c) => `${c.table_name}.${c.column_name}`)
      .filter((key) => !modelled.has(key));
    expect(missing).toEqual([]);
  });
});
