import { Injectable } from '@nestjs/common';

import type { RequestContext } from '../auth/actor';
import type { Page } from '../common/pagination';
import type { ListSpec } from '../inventory/inventory-list';
import { mergePatch } from '../inventory/inventory-patch';
import { InventoryWorkflow, type ResourceDef } from '../inventory/inventory-workflow';
import { type NewReferenceWeight, type ReferenceWeightRecord, ReferenceWeightRepository } from './reference-weight.repository';
import type { CreateReferenceWeight, ReferenceWeightListQuery, UpdateReferenceWeight } from './reference-weight.schemas';

export const REFERENCE_WEIGHT: ResourceDef = {
  what: 'reference weight',
  entityType: 'reference-weight',
  writable: [
    'assetTag',
    'nominalMassG',
    'oimlClass',
    'conventionalMassG',
    'expandedUncertaintyG',
    'densityKgPerM3',
    'certificateNumber',
    'certificateDue',
    'makerSerial',
    'location',
    'status',
    'notes',
  ],
  needsReason: ['status'],
};

export const REFERENCE_WEIGHT_LIST: ListSpec = {
  sorts: {
    assetTag: { kind: 'text' },
    createdAt: { kind: 'timestamp' },
    certificateDue: { kind: 'date', nullable: true },
    nominalMassG: { kind: 'decimal' },
  },
  searchFields: ['assetTag', 'makerSerial', 'location'],
  dueField: 'certificateDue',
};

@Injectable()
export class ReferenceWeightService {
  constructor(
    private readonly workflow: InventoryWorkflow,
    private readonly weights: ReferenceWeightRepository,
  ) {}

  create(ctx: RequestContext, body: CreateReferenceWeight): Promise<ReferenceWeightRecord> {
    const weight: NewReferenceWeight = {
      labId: body.labId,
      assetTag: body.assetTag,
      nominalMassG: body.nominalMassG,
      oimlClass: body.oimlClass,
      conventionalMassG: body.conventionalMassG ?? null,
      expandedUncertaintyG: body.expandedUncertaintyG ?? null,
      densityKgPerM3: body.densityKgPerM3 ?? null,
      certificateNumber: body.certificateNumber ?? null,
      certificateDue: body.certificateDue ?? null,
      makerSerial: body.makerSerial ?? null,
      location: body.location ?? null,
      status: body.status ?? 'in-service',
      notes: body.notes ?? null,
    };
    return this.workflow.create(ctx, REFERENCE_WEIGHT, body.labId, (tx, now) => this.weights.insert(tx, weight, now));
  }

  list(ctx: RequestContext, query: ReferenceWeightListQuery): Promise<Page<ReferenceWeightRecord>> {
    const { oimlClass, ...rest } = query;
    return this.workflow.list(ctx, REFERENCE_WEIGHT_LIST, { ...rest, equals: { oimlClass } }, (tx, args) => this.weights.list(tx, args));
  }

  get(ctx: RequestContext, id: string): Promise<ReferenceWeightRecord> {
    return this.workflow.get(ctx, REFERENCE_WEIGHT, id, (tx) => this.weights.findById(tx, id));
  }

  update(ctx: RequestContext, id: string, ifMatch: string | undefined, patch: UpdateReferenceWeight): Promise<ReferenceWeightRecord> {
    return this.workflow.update(ctx, REFERENCE_WEIGHT, id, ifMatch, patch, {
      load: (tx, weightId) => this.weights.findById(tx, weightId),
      apply: (current, p) => mergePatch(current, p),
      write: (tx, weightId, expected, changes, now) => this.weights.update(tx, weightId, expected, changes, now),
    });
  }
}
