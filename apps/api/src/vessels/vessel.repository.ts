import { Injectable } from '@nestjs/common';
import type { Prisma } from '@registry/data';
import type { AccuracyClass, VesselKind } from '@registry/metrology';

import type { ItemStatus } from '../inventory/inventory.schemas';
import { withUniqueTag } from '../inventory/inventory.errors';
import type { ListArgs } from '../inventory/inventory-list';
import { decimalOrNull, decimalOut } from '../inventory/inventory-mapping';
import type { InventoryRecord, Tx } from '../inventory/inventory-workflow';
import type { DeliveryMode, LimitSource } from './vessel-rules';

/** A vessel as the service sees it: stored fields, decimals as strings. */
export interface VesselRecord extends InventoryRecord {
  readonly assetTag: string;
  readonly kind: VesselKind;
  readonly deliveryMode: DeliveryMode;
  readonly nominalVolumeMl: string;
  readonly graduationIntervalMl: string | null;
  readonly accuracyClass: AccuracyClass;
  readonly classStandard: string | null;
  readonly material: string | null;
  readonly expansionCoefficientPerK: string;
  readonly makerSerial: string | null;
  readonly location: string | null;
  readonly limitMl: string | null;
  readonly limitSource: LimitSource;
  readonly limitReason: string | null;
  readonly status: ItemStatus;
  readonly notes: string | null;
}

/** The stored fields of a new vessel. */
export type NewVessel = Omit<VesselRecord, 'id' | 'version' | 'createdAt' | 'updatedAt'>;

type Row = Prisma.VesselGetPayload<object>;

export function toVesselRecord(row: Row): VesselRecord {
  return {
    id: row.id,
    labId: row.labId,
    assetTag: row.assetTag,
    kind: row.kind as VesselKind,
    deliveryMode: row.deliveryMode as DeliveryMode,
    nominalVolumeMl: decimalOut(row.nominalVolumeMl),
    graduationIntervalMl: decimalOrNull(row.graduationIntervalMl),
    accuracyClass: row.accuracyClass as AccuracyClass,
    classStandard: row.classStandard,
    material: row.material,
    expansionCoefficientPerK: decimalOut(row.expansionCoefficientPerK),
    makerSerial: row.makerSerial,
    location: row.location,
    limitMl: decimalOrNull(row.limitMl),
    limitSource: row.limitSource as LimitSource,
    limitReason: row.limitReason,
    status: row.status as ItemStatus,
    notes: row.notes,
    version: row.version,
    createdAt: row.createdAt.toISOString(),
    updatedAt: row.updatedAt.toISOString(),
  };
}

@Injectable()
export class VesselRepository {
  async findById(tx: Tx, id: string): Promise<VesselRecord | null> {
    const row = await tx.vessel.findUnique({ where: { id } });
    return row ? toVesselRecord(row) : null;
  }

  async list(tx: Tx, args: ListArgs): Promise<VesselRecord[]> {
    const rows = await tx.vessel.findMany({
      where: args.where as Prisma.VesselWhereInput,
      orderBy: args.orderBy as Prisma.VesselOrderByWithRelationInput[],
      take: args.take,
    });
    return rows.map(toVesselRecord);
  }

  async insert(tx: Tx, vessel: NewVessel, now: Date): Promise<VesselRecord> {
    const row = await withUniqueTag(vessel.assetTag, 'vessel', () =>
      tx.vessel.create({ data: { ...vessel, createdAt: now, updatedAt: now } }),
    );
    return toVesselRecord(row);
  }

  /** Applies the changes when the stored version is still `expected`; null otherwise. */
  async update(tx: Tx, id: string, expected: number, changes: Partial<VesselRecord>, now: Date): Promise<VesselRecord | null> {
    const data = { ...(changes as Prisma.VesselUncheckedUpdateManyInput), version: { increment: 1 }, updatedAt: now };
    const { count } = await withUniqueTag(String(changes.assetTag), 'vessel', () =>
      tx.vessel.updateMany({ where: { id, version: expected }, data }),
    );
    return count === 1 ? this.findById(tx, id) : null;
  }
}
