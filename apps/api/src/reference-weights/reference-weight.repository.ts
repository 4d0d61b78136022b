import { Injectable } from '@nestjs/common';
import type { Prisma } from '@registry/data';

import type { ItemStatus } from '../inventory/inventory.schemas';
import { withUniqueTag } from '../inventory/inventory.errors';
import type { ListArgs } from '../inventory/inventory-list';
import { dayOrNull, decimalOrNull, decimalOut, toData } from '../inventory/inventory-mapping';
import type { InventoryRecord, Tx } from '../inventory/inventory-workflow';
import type { OIML_CLASSES } from './reference-weight.schemas';

export interface ReferenceWeightRecord extends InventoryRecord {
  readonly assetTag: string;
  readonly nominalMassG: string;
  readonly oimlClass: (typeof OIML_CLASSES)[number];
  readonly conventionalMassG: string | null;
  readonly expandedUncertaintyG: string | null;
  readonly densityKgPerM3: string | null;
  readonly certificateNumber: string | null;
  readonly certificateDue: string | null;
  readonly makerSerial: string | null;
  readonly location: string | null;
  readonly status: ItemStatus;
  readonly notes: string | null;
}

export type NewReferenceWeight = Omit<ReferenceWeightRecord, 'id' | 'version' | 'createdAt' | 'updatedAt'>;

const DATE_FIELDS = ['certificateDue'];

function toRecord(row: Prisma.ReferenceWeightGetPayload<object>): ReferenceWeightRecord {
  return {
    id: row.id,
    labId: row.labId,
    assetTag: row.assetTag,
    nominalMassG: decimalOut(row.nominalMassG),
    oimlClass: row.oimlClass as ReferenceWeightRecord['oimlClass'],
    conventionalMassG: decimalOrNull(row.conventionalMassG),
    expandedUncertaintyG: decimalOrNull(row.uncertaintyG),
    densityKgPerM3: decimalOrNull(row.densityKgPerM3),
    certificateNumber: row.certificateNumber,
    certificateDue: dayOrNull(row.certificateDue),
    makerSerial: row.makerSerial,
    location: row.location,
    status: row.status as ItemStatus,
    notes: row.notes,
    version: row.version,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
  };
}

/** Record fields as Prisma data: dates, and the one member named differently from its column. */
function data(fields: Partial<ReferenceWeightRecord>): Record<string, unknown> {
  const { expandedUncertaintyG, ...rest } = fields;
  return { ...toData(rest, DATE_FIELDS), ...(expandedUncertaintyG === undefined ? {} : { uncertaintyG: expandedUncertaintyG }) };
}

@Injectable()
export class ReferenceWeightRepository {
  async findById(tx: Tx, id: string): Promise<ReferenceWeightRecord | null> {
    const row = await tx.referenceWeight.findUnique({ where: { id } });
    return row ? toRecord(row) : null;
  }

  async list(tx: Tx, args: ListArgs): Promise<ReferenceWeightRecord[]> {
    const rows = await tx.referenceWeight.findMany({
      where: args.where as Prisma.ReferenceWeightWhereInput,
      orderBy: args.orderBy as Prisma.ReferenceWeightOrderByWithRelationInput[],
      take: args.take,
    });
    return rows.map(toRecord);
  }

  async insert(tx: Tx, weight: NewReferenceWeight, now: Date): Promise<ReferenceWeightRecord> {
    const create = { ...data(weight), createdAt: now, updatedAt: now } as Prisma.ReferenceWeightUncheckedCreateInput;
    return toRecord(await withUniqueTag(weight.assetTag, 'reference weight', () => tx.referenceWeight.create({ data: create })));
  }

  async update(
    tx: Tx,
    id: string,
    expected: number,
    changes: Partial<ReferenceWeightRecord>,
    now: Date,
  ): Promise<ReferenceWeightRecord | null> {
    const update = { ...data(changes), version: { increment: 1 }, updatedAt: now } as Prisma.ReferenceWeightUncheckedUpdateManyInput;
    const { count } = await withUniqueTag(String(changes.assetTag), 'reference weight', () =>
      tx.referenceWeight.updateMany({ where: { id, version: expected }, data: update }),
    );
    return count === 1 ? this.findById(tx, id) : null;
  }
}
