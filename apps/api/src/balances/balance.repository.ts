import { Injectable } from '@nestjs/common';
import type { Prisma } from '@registry/data';

import type { ItemStatus } from '../inventory/inventory.schemas';
import { withUniqueTag } from '../inventory/inventory.errors';
import type { ListArgs } from '../inventory/inventory-list';
import { dayOrNull, decimalOrNull, decimalOut, toData } from '../inventory/inventory-mapping';
import type { InventoryRecord, Tx } from '../inventory/inventory-workflow';

export interface BalanceRecord extends InventoryRecord {
  readonly assetTag: string;
  readonly makerSerial: string | null;
  readonly model: string | null;
  readonly capacityG: string;
  readonly readabilityG: string;
  readonly adjustmentWeightDensityKgPerM3: string;
  readonly location: string | null;
  readonly status: ItemStatus;
  readonly externalCalibrationDate: string | null;
  readonly externalCalibrationCertificate: string | null;
  readonly externalCalibrationProvider: string | null;
  readonly externalCalibrationDue: string | null;
  /** Set by balance checks, never through this resource. */
  readonly minimumWeightG: string | null;
  readonly minimumWeightDeterminedAt: string | null;
  readonly notes: string | null;
}

export type NewBalance = Omit<BalanceRecord, 'id' | 'version' | 'createdAt' | 'updatedAt' | 'minimumWeightG' | 'minimumWeightDeterminedAt'>;

const DATE_FIELDS = ['externalCalibrationDate', 'externalCalibrationDue'];

function toRecord(row: Prisma.BalanceGetPayload<object>): BalanceRecord {
  return {
    id: row.id,
    labId: row.labId,
    assetTag: row.assetTag,
    makerSerial: row.makerSerial,
    model: row.model,
    capacityG: decimalOut(row.capacityG),
    readabilityG: decimalOut(row.readabilityG),
    adjustmentWeightDensityKgPerM3: decimalOut(row.adjustmentWeightDensityKgPerM3),
    location: row.location,
    status: row.status as ItemStatus,
    externalCalibrationDate: dayOrNull(row.externalCalibrationDate),
    externalCalibrationCertificate: row.externalCalibrationCertificate,
    externalCalibrationProvider: row.externalCalibrationProvider,
    externalCalibrationDue: dayOrNull(row.externalCalibrationDue),
    minimumWeightG: decimalOrNull(row.minimumWeightG),
    minimumWeightDeterminedAt: row.minimumWeightDeterminedAt?.toISOString() ?? null,
    notes: row.notes,
    version: row.version,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
  };
}

@Injectable()
export class BalanceRepository {
  async findById(tx: Tx, id: string): Promise<BalanceRecord | null> {
    const row = await tx.balance.findUnique({ where: { id } });
    return row ? toRecord(row) : null;
  }

  async list(tx: Tx, args: ListArgs): Promise<BalanceRecord[]> {
    const rows = await tx.balance.findMany({
      where: args.where as Prisma.BalanceWhereInput,
      orderBy: args.orderBy as Prisma.BalanceOrderByWithRelationInput[],
      take: args.take,
    });
    return rows.map(toRecord);
  }

  async insert(tx: Tx, balance: NewBalance, now: Date): Promise<BalanceRecord> {
    const data = { ...toData(balance, DATE_FIELDS), createdAt: now, updatedAt: now } as Prisma.BalanceUncheckedCreateInput;
    return toRecord(await withUniqueTag(balance.assetTag, 'balance', () => tx.balance.create({ data })));
  }

  async update(tx: Tx, id: string, expected: number, changes: Partial<BalanceRecord>, now: Date): Promise<BalanceRecord | null> {
    const data = { ...toData(changes, DATE_FIELDS), version: { increment: 1 }, updatedAt: now } as Prisma.BalanceUncheckedUpdateManyInput;
    const { count } = await withUniqueTag(String(changes.assetTag), 'balance', () =>
      tx.balance.updateMany({ where: { id, version: expected }, data }),
    );
    return count === 1 ? this.findById(tx, id) : null;
  }
}
