import { Injectable } from '@nestjs/common';
import { Decimal } from '@registry/metrology';

import type { RequestContext } from '../auth/actor';
import { Clock } from '../common/clock';
import type { Page } from '../common/pagination';
import { invalid } from '../inventory/inventory.errors';
import type { ListSpec } from '../inventory/inventory-list';
import { assertDueAfter, assertNotFuture, mergePatch } from '../inventory/inventory-patch';
import { InventoryWorkflow, type ResourceDef } from '../inventory/inventory-workflow';
import { type BalanceRecord, BalanceRepository, type NewBalance } from './balance.repository';
import type { BalanceListQuery, CreateBalance, UpdateBalance } from './balance.schemas';

export const BALANCE: ResourceDef = {
  what: 'balance',
  entityType: 'balance',
  writable: [
    'assetTag',
    'makerSerial',
    'model',
    'capacityG',
    'readabilityG',
    'adjustmentWeightDensityKgPerM3',
    'location',
    'status',
    'externalCalibrationDate',
    'externalCalibrationCertificate',
    'externalCalibrationProvider',
    'externalCalibrationDue',
    'notes',
  ],
  needsReason: ['status'],
};

export const BALANCE_LIST: ListSpec = {
  sorts: {
    assetTag: { kind: 'text' },
    createdAt: { kind: 'timestamp' },
    externalCalibrationDue: { kind: 'date', nullable: true },
    capacityG: { kind: 'decimal' },
  },
  searchFields: ['assetTag', 'makerSerial', 'location'],
  dueField: 'externalCalibrationDue',
};

/** The checks of the balances table, by field name. */
function check(b: Pick<BalanceRecord, 'capacityG' | 'readabilityG' | 'externalCalibrationDate' | 'externalCalibrationDue'>): void {
  if (!new Decimal(b.readabilityG).lessThan(b.capacityG))
    throw invalid('readabilityG', `must be less than the capacity (${b.capacityG} g)`);
  assertDueAfter('externalCalibrationDate', b.externalCalibrationDate, 'externalCalibrationDue', b.externalCalibrationDue);
}

@Injectable()
export class BalanceService {
  constructor(
    private readonly workflow: InventoryWorkflow,
    private readonly balances: BalanceRepository,
    private readonly clock: Clock,
  ) {}

  async create(ctx: RequestContext, body: CreateBalance): Promise<BalanceRecord> {
    const balance: NewBalance = {
      labId: body.labId,
      assetTag: body.assetTag,
      makerSerial: body.makerSerial ?? null,
      model: body.model ?? null,
      capacityG: body.capacityG,
      readabilityG: body.readabilityG,
      adjustmentWeightDensityKgPerM3: body.adjustmentWeightDensityKgPerM3 ?? '8000',
      location: body.location ?? null,
      status: body.status ?? 'in-service',
      externalCalibrationDate: body.externalCalibrationDate ?? null,
      externalCalibrationCertificate: body.externalCalibrationCertificate ?? null,
      externalCalibrationProvider: body.externalCalibrationProvider ?? null,
      externalCalibrationDue: body.externalCalibrationDue ?? null,
      notes: body.notes ?? null,
    };
    check(balance);
    assertNotFuture('externalCalibrationDate', balance.externalCalibrationDate, this.clock.now());
    return this.workflow.create(ctx, BALANCE, body.labId, (tx, now) => this.balances.insert(tx, balance, now));
  }

  list(ctx: RequestContext, query: BalanceListQuery): Promise<Page<BalanceRecord>> {
    return this.workflow.list(ctx, BALANCE_LIST, query, (tx, args) => this.balances.list(tx, args));
  }

  get(ctx: RequestContext, id: string): Promise<BalanceRecord> {
    return this.workflow.get(ctx, BALANCE, id, (tx) => this.balances.findById(tx, id));
  }

  update(ctx: RequestContext, id: string, ifMatch: string | undefined, patch: UpdateBalance): Promise<BalanceRecord> {
    return this.workflow.update(ctx, BALANCE, id, ifMatch, patch, {
      load: (tx, balanceId) => this.balances.findById(tx, balanceId),
      apply: (current, p) => {
        const next = mergePatch(current, p);
        check(next);
        assertNotFuture('externalCalibrationDate', p.externalCalibrationDate, this.clock.now());
        return next;
      },
      write: (tx, balanceId, expected, changes, now) => this.balances.update(tx, balanceId, expected, changes, now),
    });
  }
}
