import { Injectable } from '@nestjs/common';

import type { RequestContext } from '../auth/actor';
import type { Page } from '../common/pagination';
import { DomainError } from '../common/problem/domain-error';
import type { FieldError } from '../common/problem/problem-catalog';
import type { ListSpec } from '../inventory/inventory-list';
import { InventoryWorkflow, type ResourceDef } from '../inventory/inventory-workflow';
import { type NewVessel, type VesselRecord, VesselRepository } from './vessel.repository';
import type { CreateVessel, UpdateVessel, VesselFields, VesselListQuery, VesselView } from './vessel.schemas';
import { familyOf, FIXED_DELIVERY, limitReference, type ResolvedVessel, resolveVessel, type VesselSpec } from './vessel-rules';

export const VESSEL: ResourceDef = {
  what: 'vessel',
  entityType: 'vessel',
  writable: [
    'assetTag',
    'kind',
    'deliveryMode',
    'nominalVolumeMl',
    'graduationIntervalMl',
    'accuracyClass',
    'classStandard',
    'material',
    'expansionCoefficientPerK',
    'makerSerial',
    'location',
    'limitMl',
    'limitSource',
    'limitReason',
    'status',
    'notes',
  ],
  needsReason: ['status', 'limitMl', 'limitSource', 'limitReason'],
};

export const VESSEL_LIST: ListSpec = {
  sorts: {
    assetTag: { kind: 'text' },
    createdAt: { kind: 'timestamp' },
    updatedAt: { kind: 'timestamp' },
    nominalVolumeMl: { kind: 'decimal' },
  },
  searchFields: ['assetTag', 'makerSerial', 'location'],
};

/** Fields that decide the acceptance limit: a PATCH touching none of them keeps the stored limit. */
const LIMIT_INPUTS = ['kind', 'accuracyClass', 'nominalVolumeMl', 'classStandard', 'limitOverrideMl', 'limitOverrideReason'] as const;

export const invalidVessel = (errors: readonly FieldError[]): DomainError =>
  new DomainError('validation-failed', `${errors.length} field(s) failed validation.`, errors);

/** The create members as a spec for the rules. */
export function specOf(fields: VesselFields): VesselSpec {
  return {
    kind: fields.kind,
    deliveryMode: fields.deliveryMode ?? null,
    nominalVolumeMl: fields.nominalVolumeMl,
    graduationIntervalMl: fields.graduationIntervalMl ?? null,
    accuracyClass: fields.accuracyClass,
    classStandard: fields.classStandard ?? null,
    material: fields.material ?? null,
    expansionCoefficientPerK: fields.expansionCoefficientPerK ?? null,
    limitOverrideMl: fields.limitOverrideMl ?? null,
    limitOverrideReason: fields.limitOverrideReason ?? null,
  };
}

/** A checked new vessel from the create members, or the field errors. */
export function newVessel(labId: string, fields: VesselFields): { vessel: NewVessel } | { errors: FieldError[] } {
  const resolved = resolveVessel(specOf(fields));
  if (!resolved.ok) return { errors: resolved.errors };
  return {
    vessel: {
      labId,
      assetTag: fields.assetTag,
      kind: fields.kind,
      nominalVolumeMl: fields.nominalVolumeMl,
      accuracyClass: fields.accuracyClass,
      makerSerial: fields.makerSerial ?? null,
      location: fields.location ?? null,
      status: fields.status ?? 'in-service',
      notes: fields.notes ?? null,
      ...resolved.value,
    },
  };
}

export const toVesselView = (v: VesselRecord): VesselView => ({ ...v, limitReference: limitReference(v) });

@Injectable()
export class VesselService {
  constructor(
    private readonly workflow: InventoryWorkflow,
    private readonly vessels: VesselRepository,
  ) {}

  async create(ctx: RequestContext, body: CreateVessel): Promise<VesselView> {
    const { labId, ...fields } = body;
    const checked = newVessel(labId, fields);
    if ('errors' in checked) throw invalidVessel(checked.errors);
    const created = await this.workflow.create(ctx, VESSEL, labId, (tx, now) => this.vessels.insert(tx, checked.vessel, now));
    return toVesselView(created);
  }

  async list(ctx: RequestContext, query: VesselListQuery): Promise<Page<VesselView>> {
    const { kind, accuracyClass, ...rest } = query;
    const page = await this.workflow.list(ctx, VESSEL_LIST, { ...rest, equals: { kind, accuracyClass } }, (tx, args) =>
      this.vessels.list(tx, args),
    );
    return { ...page, items: page.items.map(toVesselView) };
  }

  async get(ctx: RequestContext, id: string): Promise<VesselView> {
    return toVesselView(await this.workflow.get(ctx, VESSEL, id, (tx) => this.vessels.findById(tx, id)));
  }

  async update(ctx: RequestContext, id: string, ifMatch: string | undefined, patch: UpdateVessel): Promise<VesselView> {
    const updated = await this.workflow.update(ctx, VESSEL, id, ifMatch, patch, {
      load: (tx, vesselId) => this.vessels.findById(tx, vesselId),
      apply: applyVesselPatch,
      write: (tx, vesselId, expected, changes, now) => this.vessels.update(tx, vesselId, expected, changes, now),
    });
    return toVesselView(updated);
  }
}

/** The vessel after a PATCH, with delivery mode, expansion coefficient and limit derived again where needed. */
export function applyVesselPatch(current: VesselRecord, patch: UpdateVessel): VesselRecord {
  const kind = patch.kind ?? current.kind;
  const has = (k: keyof UpdateVessel) => patch[k] !== undefined;
  const keepExpansion = !has('material') && !has('expansionCoefficientPerK');
  const override = has('limitOverrideMl')
    ? { ml: patch.limitOverrideMl ?? null, reason: patch.limitOverrideReason ?? patch.reason ?? null }
    : current.limitSource === 'lab-override'
      ? { ml: current.limitMl, reason: patch.limitOverrideReason ?? current.limitReason }
      : { ml: null, reason: null };
  if (override.ml === null && has('limitOverrideReason')) {
    throw invalidVessel([{ field: 'limitOverrideReason', reason: 'applies only with a lab override (limitOverrideMl)' }]);
  }
  const spec: VesselSpec = {
    kind,
    deliveryMode: patch.deliveryMode ?? (FIXED_DELIVERY[kind] ? null : current.deliveryMode),
    nominalVolumeMl: patch.nominalVolumeMl ?? current.nominalVolumeMl,
    graduationIntervalMl: patch.graduationIntervalMl === undefined ? current.graduationIntervalMl : patch.graduationIntervalMl,
    accuracyClass: patch.accuracyClass ?? current.accuracyClass,
    classStandard:
      patch.classStandard !== undefined ? patch.classStandard : current.classStandard === null ? null : familyOf(current.classStandard),
    // An untouched expansion coefficient stays exactly as stored.
    material: keepExpansion ? null : (patch.material ?? null),
    expansionCoefficientPerK: keepExpansion ? current.expansionCoefficientPerK : (patch.expansionCoefficientPerK ?? null),
    limitOverrideMl: override.ml,
    limitOverrideReason: override.reason,
  };
  const resolved = resolveVessel(spec);
  if (!resolved.ok) throw invalidVessel(resolved.errors);
  const derived: ResolvedVessel = {
    ...resolved.value,
    material: keepExpansion ? current.material : resolved.value.material,
  };
  const limitTouched = LIMIT_INPUTS.some((k) => has(k));
  return {
    ...current,
    assetTag: patch.assetTag ?? current.assetTag,
    kind,
    nominalVolumeMl: spec.nominalVolumeMl,
    accuracyClass: spec.accuracyClass,
    makerSerial: patch.makerSerial === undefined ? current.makerSerial : patch.makerSerial,
    location: patch.location === undefined ? current.location : patch.location,
    notes: patch.notes === undefined ? current.notes : patch.notes,
    status: patch.status ?? current.status,
    deliveryMode: derived.deliveryMode,
    graduationIntervalMl: derived.graduationIntervalMl,
    material: derived.material,
    expansionCoefficientPerK: derived.expansionCoefficientPerK,
    ...(limitTouched
      ? {
          classStandard: derived.classStandard,
          limitMl: derived.limitMl,
          limitSource: derived.limitSource,
          limitReason: derived.limitReason,
        }
      : {}),
  };
}
