import { Injectable } from '@nestjs/common';
import type { Prisma } from '@registry/data';

import type { ItemStatus } from '../inventory/inventory.schemas';
import { withUniqueTag } from '../inventory/inventory.errors';
import type { ListArgs } from '../inventory/inventory-list';
import { dayOrNull, decimalOrNull, toData } from '../inventory/inventory-mapping';
import type { InventoryRecord, Tx } from '../inventory/inventory-workflow';
import type { InstrumentKind } from './instrument.schemas';

export interface InstrumentRecord extends InventoryRecord {
  readonly assetTag: string;
  readonly kind: InstrumentKind;
  readonly makerSerial: string | null;
  readonly model: string | null;
  readonly temperatureUncertaintyK: string | null;
  readonly pressureUncertaintyPa: string | null;
  readonly humidityUncertaintyPercent: string | null;
  readonly calibrationDate: string | null;
  readonly certificateNumber: string | null;
  readonly calibrationDue: string | null;
  readonly location: string | null;
  readonly status: ItemStatus;
  readonly notes: string | null;
}

export type NewInstrument = Omit<InstrumentRecord, 'id' | 'version' | 'createdAt' | 'updatedAt'>;

const DATE_FIELDS = ['calibrationDate', 'calibrationDue'];

function toRecord(row: Prisma.InstrumentGetPayload<object>): InstrumentRecord {
  return {
    id: row.id,
    labId: row.labId,
    assetTag: row.assetTag,
    kind: row.kind as InstrumentKind,
    makerSerial: row.makerSerial,
    model: row.model,
    temperatureUncertaintyK: decimalOrNull(row.temperatureUncertaintyK),
    pressureUncertaintyPa: decimalOrNull(row.pressureUncertaintyPa),
    humidityUncertaintyPercent: decimalOrNull(row.humidityUncertaintyPercent),
    calibrationDate: dayOrNull(row.calibrationDate),
    certificateNumber: row.certificateNumber,
    calibrationDue: dayOrNull(row.calibrationDue),
    location: row.location,
    status: row.status as ItemStatus,
    notes: row.notes,
    version: row.version,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
  };
}

@Injectable()
export class InstrumentRepository {
  async findById(tx: Tx, id: string): Promise<InstrumentRecord | null> {
    const row = await tx.instrument.findUnique({ where: { id } });
    return row ? toRecord(row) : null;
  }

  async list(tx: Tx, args: ListArgs): Promise<InstrumentRecord[]> {
    const rows = await tx.instrument.findMany({
      where: args.where as Prisma.InstrumentWhereInput,
      orderBy: args.orderBy as Prisma.InstrumentOrderByWithRelationInput[],
      take: args.take,
    });
    return rows.map(toRecord);
  }

  async insert(tx: Tx, instrument: NewInstrument, now: Date): Promise<InstrumentRecord> {
    const data = { ...toData(instrument, DATE_FIELDS), createdAt: now, updatedAt: now } as Prisma.InstrumentUncheckedCreateInput;
    return toRecord(await withUniqueTag(instrument.assetTag, 'instrument', () => tx.instrument.create({ data })));
  }

  async update(tx: Tx, id: string, expected: number, changes: Partial<InstrumentRecord>, now: Date): Promise<InstrumentRecord | null> {
    const data = {
      ...toData(changes, DATE_FIELDS),
      version: { increment: 1 },
      updatedAt: now,
    } as Prisma.InstrumentUncheckedUpdateManyInput;
    const { count } = await withUniqueTag(String(changes.assetTag), 'instrument', () =>
      tx.instrument.updateMany({ where: { id, version: expected }, data }),
    );
    return count === 1 ? this.findById(tx, id) : null;
  }
}
