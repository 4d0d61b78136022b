import { Injectable } from '@nestjs/common';
import { Decimal } from '@registry/metrology';

import type { RequestContext } from '../auth/actor';
import { formatDecimal } from '../common/quantity';
import {
  type AppliedCorrection,
  type CurvePoint,
  applyRatio,
  atLiquidTemperature,
  interpolateCurve,
  nominalFallback,
} from './factor-correction';
import { FactorLookupService, keysOf, type Resolved } from './factor-lookup.service';
import { plain, presentCurve } from './factor.presenter';
import type { CorrectionRequest, CorrectionView } from './factor.schemas';

/** Kinds that deliver or contain only their nominal volume. */
const ONE_MARK_KINDS = new Set(['volumetric-flask', 'one-mark-pipette', 'piston-pipette-fixed']);

const pointRef = (p: CurvePoint) => ({
  nominalVolumeMl: p.nominalVolumeMl,
  correctionMl: p.correctionMl,
  expandedUncertaintyMl: p.expandedUncertaintyMl,
});

/** POST /v1/factors/corrections: a reading corrected with the named person's own factor for the vessel. */
@Injectable()
export class FactorCorrectionService {
  constructor(private readonly lookup: FactorLookupService) {}

  async correct(ctx: RequestContext, body: CorrectionRequest): Promise<CorrectionView> {
    const resolved = await this.lookup.resolve(ctx, {
      ...keysOf(body),
      at: null,
      allowNominalFallback: body.allowNominalFallback === true,
    });
    const indicated = new Decimal(body.indicatedVolumeMl);
    const applied = apply(resolved, indicated);
    const vessel = resolved.lookup.vessel;
    const factor = resolved.source === 'factor' ? resolved.factor : null;
    const referenceTemperatureC = factor ? plain(factor.referenceTemperatureC) : '20';
    const temperature =
      body.liquidTemperatureC === undefined
        ? null
        : {
            t: new Decimal(body.liquidTemperatureC),
            result: atLiquidTemperature({
              volumeMl: applied.correctedVolumeMl,
              expandedUncertaintyMl: applied.expandedUncertaintyMl,
              expansionCoefficientPerK: new Decimal(vessel.expansionCoefficientPerK),
              liquidTemperatureC: new Decimal(body.liquidTemperatureC),
              referenceTemperatureC: new Decimal(referenceTemperatureC),
            }),
          };
    return {
      source: resolved.source,
      fallbackFor:
        resolved.source === 'nominal-fallback'
          ? { ...resolved.fallbackFor, validUntil: resolved.fallbackFor.validUntil?.toISOString() ?? null }
          : null,
      method: applied.method,
      factorId: factor?.id ?? null,
      calibrationId: factor?.calibrationId ?? null,
      personId: resolved.personId,
      vesselId: vessel.id,
      labId: vessel.labId,
      indicatedVolumeMl: plain(indicated),
      correctionMl: formatDecimal(applied.correctionMl),
      correctedVolumeMl: formatDecimal(applied.correctedVolumeMl),
      expandedUncertaintyMl: formatDecimal(applied.expandedUncertaintyMl),
      coverageFactor: factor ? plain(factor.coverageFactor) : null,
      referenceTemperatureC,
      between: applied.between ? { lower: pointRef(applied.between.lower), upper: pointRef(applied.between.upper) } : null,
      atLiquidTemperature: temperature
        ? {
            liquidTemperatureC: plain(temperature.t),
            expansionCoefficientPerK: plain(vessel.expansionCoefficientPerK),
            expansionFactor: formatDecimal(temperature.result.expansionFactor),
            volumeMl: formatDecimal(temperature.result.volumeMl),
            expandedUncertaintyMl: formatDecimal(temperature.result.expandedUncertaintyMl),
          }
        : null,
      validUntil: factor?.validUntil.toISOString() ?? null,
      vesselStatus: vessel.status,
      reviewRequired: factor ? factor.reviewRequiredAt !== null : false,
    };
  }
}

function apply(resolved: Resolved, indicated: Decimal): AppliedCorrection {
  const vessel = resolved.lookup.vessel;
  const nominal = new Decimal(vessel.nominalVolumeMl);
  if (resolved.source === 'nominal-fallback') {
    return nominalFallback({
      indicatedVolumeMl: indicated,
      nominalVolumeMl: nominal,
      oneMark: ONE_MARK_KINDS.has(vessel.kind),
      limitMl: new Decimal(resolved.limitMl),
    });
  }
  const f = resolved.factor;
  if (f.kind === 'curve') return interpolateCurve(presentCurve(f.curve) ?? [], indicated);
  return applyRatio({
    indicatedVolumeMl: indicated,
    nominalVolumeMl: nominal,
    factor: new Decimal(f.factor ?? '1'),
    expandedUncertaintyMl: new Decimal(f.expandedUncertaintyMl),
  });
}
