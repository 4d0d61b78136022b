import { Injectable } from '@nestjs/common';
import { type ClientBase, Pool } from 'pg';

import type { VesselRecord } from './vessel.repository';

/** Rows per INSERT statement: keeps each statement's parameters and plan small. */
const CHUNK = 2_500;

/** Record fields in the column order of the INSERT below, with their array types. */
const COLUMNS: readonly (readonly [keyof VesselRecord, string, string])[] = [
  ['id', 'id', 'uuid'],
  ['labId', 'lab_id', 'uuid'],
  ['assetTag', 'asset_tag', 'text'],
  ['kind', 'kind', 'text'],
  ['deliveryMode', 'delivery_mode', 'text'],
  ['nominalVolumeMl', 'nominal_volume_ml', 'numeric'],
  ['graduationIntervalMl', 'graduation_interval_ml', 'numeric'],
  ['accuracyClass', 'accuracy_class', 'text'],
  ['classStandard', 'class_standard', 'text'],
  ['material', 'material', 'text'],
  ['expansionCoefficientPerK', 'expansion_coefficient_per_k', 'numeric'],
  ['makerSerial', 'maker_serial', 'text'],
  ['location', 'location', 'text'],
  ['limitMl', 'limit_ml', 'numeric'],
  ['limitSource', 'limit_source', 'text'],
  ['limitReason', 'limit_reason', 'text'],
  ['status', 'status', 'text'],
  ['notes', 'notes', 'text'],
  ['version', 'version', 'int'],
  ['createdAt', 'created_at', 'timestamptz'],
  ['updatedAt', 'updated_at', 'timestamptz'],
];

const INSERT = `
  INSERT INTO vessels (${COLUMNS.map(([, column]) => column).join(', ')})
  SELECT * FROM unnest(${COLUMNS.map(([, , type], i) => `$${i + 1}::${type}[]`).join(', ')})`;

/**
 * Bulk access for the CSV import. It runs on a node-postgres client of its own
 * transaction: array parameters go to the server as they are, which makes
 * 10,000-row inserts several times cheaper than through the Prisma client.
 */
@Injectable()
export class VesselImportRepository {
  constructor(private readonly pool: Pool) {}

  /** Runs `work` in one transaction on one connection; rolls back on any error. */
  async transaction<T>(work: (client: ClientBase) => Promise<T>): Promise<T> {
    const client = await this.pool.connect();
    try {
      await client.query('BEGIN');
      const result = await work(client);
      await client.query('COMMIT');
      return result;
    } catch (error) {
      await client.query('ROLLBACK').catch(() => undefined);
      throw error;
    } finally {
      client.release();
    }
  }

  /** Which of these asset tags are already registered. */
  async registeredTags(tags: readonly string[]): Promise<Set<string>> {
    const { rows } = await this.pool.query<{ asset_tag: string }>('SELECT asset_tag FROM vessels WHERE asset_tag = ANY($1::text[])', [
      tags,
    ]);
    return new Set(rows.map((r) => r.asset_tag));
  }

  /** The lab's state, read under a share lock so it cannot be retired while the import runs. */
  async labState(client: ClientBase, labId: string): Promise<'open' | 'retired' | 'missing'> {
    const { rows } = await client.query<{ retired: boolean }>(
      'SELECT retired_at IS NOT NULL AS retired FROM labs WHERE id = $1 FOR SHARE',
      [labId],
    );
    const lab = rows[0];
    return lab === undefined ? 'missing' : lab.retired ? 'retired' : 'open';
  }

  /** Inserts complete records (ids and timestamps already set) with multi-row INSERT ... SELECT FROM unnest. */
  async insertAll(client: ClientBase, vessels: readonly VesselRecord[]): Promise<void> {
    for (let i = 0; i < vessels.length; i += CHUNK) {
      const chunk = vessels.slice(i, i + CHUNK);
      await client.query(
        INSERT,
        COLUMNS.map(([field]) => chunk.map((v) => v[field])),
      );
    }
  }
}
