import { readFileSync } from 'node:fs';
import { join } from 'node:path';

/** One scalar field of a Prisma model, as written in schema.prisma. */
export interface SchemaField {
  readonly model: string;
  readonly name: string;
  readonly column: string;
  readonly type: string;
  readonly nativeType: string | null;
  readonly optional: boolean;
  readonly list: boolean;
}

export interface SchemaModel {
  readonly name: string;
  readonly table: string;
  readonly fields: SchemaField[];
}

export interface ParsedSchema {
  readonly models: SchemaModel[];
  readonly enums: Map<string, string>;
}

const BLOCK = /^(model|enum)\s+(\w+)\s*\{([\s\S]*?)^\}/gm;

/**
 * A small reader for the parts of schema.prisma the drift test needs: models,
 * their scalar fields with @map / @db, and enums with @@map. Relation fields
 * (whose type is another model) are skipped: they have no column.
 */
export function readPrismaSchema(path = join(__dirname, '..', '..', 'prisma', 'schema.prisma')): ParsedSchema {
  const text = readFileSync(path, 'utf8').replace(/\/\/.*$/gm, '');
  const blocks = [...text.matchAll(BLOCK)];
  const modelNames = new Set(blocks.filter((b) => b[1] === 'model').map((b) => b[2] as string));
  const enums = new Map<string, string>();
  for (const [, kind, name, body] of blocks) {
    if (kind === 'enum') enums.set(name as string, body?.match(/@@map\("([^"]+)"\)/)?.[1] ?? (name as string));
  }
  const models: SchemaModel[] = [];
  for (const [, kind, name, body] of blocks) {
    if (kind !== 'model' || !name || !body) continue;
    const table = body.match(/@@map\("([^"]+)"\)/)?.[1] ?? name;
    const fields: SchemaField[] = [];
    for (const raw of body.split('\n')) {
      const line = raw.trim();
      const m = line.match(/^(\w+)\s+(\w+)(\[\])?(\?)?(.*)$/);
      if (!m || line.startsWith('@@')) continue;
      const [, fieldName, type, list, optional, attrs = ''] = m;
      if (!fieldName || !type || modelNames.has(type) || attrs.includes('@relation') || attrs.includes('@ignore')) continue;
      fields.push({
        model: name,
        name: fieldName,
        column: attrs.match(/@map\("([^"]+)"\)/)?.[1] ?? fieldName,
        type,
        nativeType: attrs.match(/@db\.(\w+)/)?.[1] ?? null,
        optional: Boolean(optional),
        list: Boolean(list),
      });
    }
    models.push({ name, table, fields });
  }
  return { models, enums };
}

/** PostgreSQL `data_type`s a Prisma scalar may map to. */
export const COMPATIBLE_TYPES: Record<string, string[]> = {
  String: ['text', 'character varying', 'character', 'uuid', 'citext', 'inet'],
  Int: ['integer', 'smallint'],
  BigInt: ['bigint'],
  Float: ['double precision', 'real'],
  Decimal: ['numeric'],
  Boolean: ['boolean'],
  DateTime: ['timestamp with time zone', 'timestamp without time zone', 'date'],
  Json: ['jsonb', 'json'],
  Bytes: ['bytea'],
};

/** Native type attributes that pin the column type exactly. */
export const NATIVE_TYPES: Record<string, string> = {
  Uuid: 'uuid',
  Text: 'text',
  VarChar: 'character varying',
  Timestamptz: 'timestamp with time zone',
  Timestamp: 'timestamp without time zone',
  Date: 'date',
  Inet: 'inet',
  SmallInt: 'smallint',
  Citext: 'citext',
};
