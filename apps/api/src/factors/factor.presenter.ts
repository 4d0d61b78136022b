import { Decimal } from '@registry/metrology';

import type { CurvePoint } from './factor-correction';
import type { Resolved } from './factor-lookup.service';
import type { CurrentFactorView, FactorState, FactorView } from './factor.schemas';

/** A stored NUMERIC (string or Decimal) in plain notation without trailing zeros. */
export const plain = (value: string | number | { toFixed(): string }): string =>
  typeof value === 'object' ? value.toFixed() : new Decimal(value).toFixed();
const plainOrNull = (value: string | { toFixed(): string } | null): string | null => (value === null ? null : plain(value));

/** Curve points as decimal strings, whatever JSON numbers or strings they were stored as. */
export function presentCurve(curve: unknown): CurvePoint[] | null {
  if (!Array.isArray(curve)) return null;
  return (curve as Record<keyof CurvePoint, string | number>[]).map((p) => ({
    nominalVolumeMl: plain(p.nominalVolumeMl),
    meanVolumeMl: plain(p.meanVolumeMl),
    correctionMl: plain(p.correctionMl),
    expandedUncertaintyMl: plain(p.expandedUncertaintyMl),
  }));
}

/**
 * Strong entity tag of a factor as presented: its id and state, plus what else
 * can change in the representation (a review flag; the vessel leaving service).
 * Factor values never change, so this is enough.
 */
export function factorEtag(id: string, state: FactorState, reviewRequired: boolean, vesselStatus?: string): string {
  const vessel = vesselStatus && vesselStatus !== 'in-service' ? `-${vesselStatus}` : '';
  return `"${id}-${state}${reviewRequired ? '-review' : ''}${vessel}"`;
}

/** The answer of GET /v1/factors/current, with its ETag (none for a nominal fallback). */
export function presentCurrent(r: Resolved): { view: CurrentFactorView; etag: string | null } {
  const v = r.lookup.vessel;
  const common = {
    personId: r.personId,
    vesselId: v.id,
    labId: v.labId,
    nominalVolumeMl: plain(v.nominalVolumeMl),
    vesselStatus: v.status,
  };
  if (r.source === 'nominal-fallback') {
    return {
      etag: null,
      view: {
        source: 'nominal-fallback',
        fallbackFor: { ...r.fallbackFor, validUntil: r.fallbackFor.validUntil?.toISOString() ?? null },
        factorId: null,
        state: null,
        kind: null,
        ...common,
        factor: '1',
        correctionMl: '0',
        curve: null,
        expandedUncertaintyMl: plain(r.limitMl),
        coverageFactor: null,
        referenceTemperatureC: '20',
        validFrom: null,
        validUntil: null,
        calibrationId: null,
        reviewRequired: false,
        reviewReason: null,
      },
    };
  }
  const f = r.factor;
  const reviewRequired = f.reviewRequiredAt !== null;
  return {
    etag: factorEtag(f.id, f.state, reviewRequired, v.status),
    view: {
      source: 'factor',
      fallbackFor: null,
      factorId: f.id,
      state: f.state,
      kind: f.kind,
      ...common,
      factor: plainOrNull(f.factor),
      correctionMl: plainOrNull(f.correctionMl),
      curve: f.kind === 'curve' ? presentCurve(f.curve) : null,
      expandedUncertaintyMl: plain(f.expandedUncertaintyMl),
      coverageFactor: plain(f.coverageFactor),
      referenceTemperatureC: plain(f.referenceTemperatureC),
      validFrom: f.validFrom.toISOString(),
      validUntil: f.validUntil.toISOString(),
      calibrationId: f.calibrationId,
      reviewRequired,
      reviewReason: f.reviewReason,
    },
  };
}

/** A factor row as the registry stores it (Prisma types stay in the repository; this is the shape it returns). */
export interface FactorRecord {
  readonly id: string;
  readonly labId: string;
  readonly personId: string;
  readonly vesselId: string;
  readonly calibrationId: string;
  readonly kind: string;
  readonly factor: { toFixed(): string } | null;
  readonly correctionMl: { toFixed(): string } | null;
  readonly curve: unknown;
  readonly expandedUncertaintyMl: { toFixed(): string };
  readonly coverageFactor: { toFixed(): string };
  readonly referenceTemperatureC: { toFixed(): string };
  readonly validFrom: Date;
  readonly validUntil: Date;
  readonly state: string;
  readonly endedAt: Date | null;
  readonly supersededById: string | null;
  readonly reviewRequiredAt: Date | null;
  readonly reviewReason: string | null;
  readonly createdAt: Date;
}

export function presentFactor(f: FactorRecord): FactorView {
  return {
    id: f.id,
    labId: f.labId,
    personId: f.personId,
    vesselId: f.vesselId,
    calibrationId: f.calibrationId,
    kind: f.kind as FactorView['kind'],
    factor: plainOrNull(f.factor),
    correctionMl: plainOrNull(f.correctionMl),
    curve: f.kind === 'curve' ? presentCurve(f.curve) : null,
    expandedUncertaintyMl: plain(f.expandedUncertaintyMl),
    coverageFactor: plain(f.coverageFactor),
    referenceTemperatureC: plain(f.referenceTemperatureC),
    validFrom: f.validFrom.toISOString(),
    validUntil: f.validUntil.toISOString(),
    state: f.state as FactorState,
    endedAt: f.endedAt?.toISOString() ?? null,
    supersededById: f.supersededById,
    reviewRequired: f.reviewRequiredAt !== null,
    reviewRequiredAt: f.reviewRequiredAt?.toISOString() ?? null,
    reviewReason: f.reviewReason,
    createdAt: f.createdAt.toISOString(),
  };
}
