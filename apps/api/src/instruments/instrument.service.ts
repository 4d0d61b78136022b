import { Injectable } from '@nestjs/common';

import type { RequestContext } from '../auth/actor';
import { Clock } from '../common/clock';
import type { Page } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import type { ListSpec } from '../inventory/inventory-list';
import { assertDueAfter, assertNotFuture, mergePatch } from '../inventory/inventory-patch';
import { InventoryWorkflow, type ResourceDef } from '../inventory/inventory-workflow';
import { type InstrumentRecord, InstrumentRepository, type NewInstrument } from './instrument.repository';
import {
  type CreateInstrument,
  type InstrumentListQuery,
  UNCERTAINTIES_OF,
  UNCERTAINTY_FIELDS,
  type UpdateInstrument,
} from './instrument.schemas';

export const INSTRUMENT: ResourceDef = {
  what: 'instrument',
  entityType: 'instrument',
  writable: [
    'assetTag',
    'kind',
    'makerSerial',
    'model',
    'temperatureUncertaintyK',
    'pressureUncertaintyPa',
    'humidityUncertaintyPercent',
    'calibrationDate',
    'certificateNumber',
    'calibrationDue',
    'location',
    'status',
    'notes',
  ],
  needsReason: ['status'],
};

export const INSTRUMENT_LIST: ListSpec = {
  sorts: {
    assetTag: { kind: 'text' },
    createdAt: { kind: 'timestamp' },
    calibrationDue: { kind: 'date', nullable: true },
    kind: { kind: 'text' },
  },
  searchFields: ['assetTag', 'makerSerial', 'location'],
  dueField: 'calibrationDue',
};

/** The checks of the instruments table, by field name: uncertainties of what the kind measures, due after calibration. */
function check(i: Omit<NewInstrument, 'labId'>): void {
  const allowed = UNCERTAINTIES_OF[i.kind];
  const misplaced = UNCERTAINTY_FIELDS.filter((f) => i[f] !== null && !allowed.includes(f));
  if (misplaced.length > 0) {
    throw new DomainError(
      'validation-failed',
      `A ${i.kind} carries only ${allowed.join(' and ')}.`,
      misplaced.map((field) => ({ field, reason: `does not apply to a ${i.kind}` })),
    );
  }
  assertDueAfter('calibrationDate', i.calibrationDate, 'calibrationDue', i.calibrationDue);
}

@Injectable()
export class InstrumentService {
  constructor(
    private readonly workflow: InventoryWorkflow,
    private readonly instruments: InstrumentRepository,
    private readonly clock: Clock,
  ) {}

  create(ctx: RequestContext, body: CreateInstrument): Promise<InstrumentRecord> {
    const instrument: NewInstrument = {
      labId: body.labId,
      assetTag: body.assetTag,
      kind: body.kind,
      makerSerial: body.makerSerial ?? null,
      model: body.model ?? null,
      temperatureUncertaintyK: body.temperatureUncertaintyK ?? null,
      pressureUncertaintyPa: body.pressureUncertaintyPa ?? null,
      humidityUncertaintyPercent: body.humidityUncertaintyPercent ?? null,
      calibrationDate: body.calibrationDate ?? null,
      certificateNumber: body.certificateNumber ?? null,
      calibrationDue: body.calibrationDue ?? null,
      location: body.location ?? null,
      status: body.status ?? 'in-service',
      notes: body.notes ?? null,
    };
    check(instrument);
    assertNotFuture('calibrationDate', instrument.calibrationDate, this.clock.now());
    return this.workflow.create(ctx, INSTRUMENT, body.labId, (tx, now) => this.instruments.insert(tx, instrument, now));
  }

  list(ctx: RequestContext, query: InstrumentListQuery): Promise<Page<InstrumentRecord>> {
    const { kind, ...rest } = query;
    return this.workflow.list(ctx, INSTRUMENT_LIST, { ...rest, equals: { kind } }, (tx, args) => this.instruments.list(tx, args));
  }

  get(ctx: RequestContext, id: string): Promise<InstrumentRecord> {
    return this.workflow.get(ctx, INSTRUMENT, id, (tx) => this.instruments.findById(tx, id));
  }

  update(ctx: RequestContext, id: string, ifMatch: string | undefined, patch: UpdateInstrument): Promise<InstrumentRecord> {
    return this.workflow.update(ctx, INSTRUMENT, id, ifMatch, patch, {
      load: (tx, instrumentId) => this.instruments.findById(tx, instrumentId),
      apply: (current, p) => {
        const next = mergePatch(current, p);
        check(next);
        assertNotFuture('calibrationDate', p.calibrationDate, this.clock.now());
        return next;
      },
      write: (tx, instrumentId, expected, changes, now) => this.instruments.update(tx, instrumentId, expected, changes, now),
    });
  }
}
