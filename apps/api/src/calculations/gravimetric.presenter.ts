import {
  DEFAULT_REFERENCE_TEMPERATURE_C,
  type GravimetricPointResult,
  type GrubbsResult,
  REFERENCE_WEIGHT_DENSITY_KG_PER_M3,
  type ToleranceLimit,
  Decimal,
  type VerdictResult,
} from '@registry/metrology';

import { echoDecimal as echo, formatOrInfinite, formatDecimal as str } from '../common/quantity';
import type { ResolvedAir } from './air';
import type { ApiWarning } from './field-paths';
import type { GravimetricVolumeResponse, PublishedLimit } from './gravimetric.responses';
import type { GravimetricVolumeRequest } from './gravimetric.schemas';

/** Turns the library's Decimals into the wire form of GravimetricVolumeResponseSchema. */
export function presentGravimetric(
  body: GravimetricVolumeRequest,
  air: ResolvedAir,
  r: GravimetricPointResult,
  published: ToleranceLimit | null,
  warnings: ApiWarning[],
): GravimetricVolumeResponse {
  const u = r.uncertainty;
  const budget = u.budget;
  return {
    deliveryMode: body.deliveryMode,
    nominalVolumeMl: echo(body.nominalVolumeMl),
    referenceTemperatureC: echo(body.referenceTemperatureC ?? DEFAULT_REFERENCE_TEMPERATURE_C),
    airDensityKgPerM3: air.source === 'given' ? echo(r.airDensityKgPerM3) : str(r.airDensityKgPerM3),
    airDensitySource: air.source,
    weightDensityKgPerM3: echo(body.weightDensityKgPerM3 ?? REFERENCE_WEIGHT_DENSITY_KG_PER_M3),
    expansionCoefficientPerK: echo(r.expansionCoefficientPerK),
    expansionCoefficientSource: r.expansionCoefficientSource,
    replicates: r.replicates.map((x, index) => ({
      index,
      netMassG: str(x.netMassG),
      waterTemperatureC: echo(x.waterTemperatureC),
      waterDensityKgPerM3: str(x.waterDensityKgPerM3),
      zFactorMlPerG: str(x.zMlPerG),
      volumeMl: str(x.volumeMl),
    })),
    meanVolumeMl: str(r.meanVolumeMl),
    standardDeviationMl: str(r.standardDeviationMl),
    cvPercent: str(r.cvPercent),
    systematicErrorMl: str(r.systematicErrorMl),
    systematicErrorPercent: str(r.systematicErrorPercent),
    uncertaintyBudget: budget.rows.map((row) => ({
      quantity: row.quantity,
      symbol: row.symbol,
      unit: row.unit,
      value: str(row.value),
      standardUncertainty: str(row.standardUncertainty),
      distribution: row.distribution,
      degreesOfFreedom: formatOrInfinite(row.degreesOfFreedom),
      sensitivityCoefficient: str(row.sensitivityCoefficient),
      contributionMl: str(row.contribution),
      share: str(row.share),
      note: row.note ?? null,
    })),
    combinedStandardUncertaintyMl: str(u.combinedStandardUncertaintyMl),
    effectiveDegreesOfFreedom: formatOrInfinite(u.effectiveDegreesOfFreedom),
    coverageProbability: str(budget.coverageProbability),
    coverageFactor: str(u.coverageFactor),
    coverageRule: budget.coverageRule,
    expandedUncertaintyMl: str(u.expandedUncertaintyMl),
    relativeExpandedUncertaintyPercent: str(u.relativeExpandedUncertaintyPercent),
    outliers: presentGrubbs(r.grubbs),
    verdict: presentVerdict(r.verdict, published),
    warnings,
  };
}

function presentGrubbs(g: GrubbsResult): GravimetricVolumeResponse['outliers'] {
  if (!g.applicable) {
    return {
      test: 'grubbs',
      applicable: false,
      reason: g.reason,
      alpha: null,
      suspectIndex: null,
      suspectVolumeMl: null,
      g: null,
      gCritical: null,
      outlier: false,
    };
  }
  return {
    test: 'grubbs',
    applicable: true,
    reason: null,
    alpha: str(g.alpha),
    suspectIndex: g.suspectIndex,
    suspectVolumeMl: str(g.suspectValue),
    g: str(g.g),
    gCritical: str(g.gCritical),
    outlier: g.outlier,
  };
}

function presentVerdict(v: VerdictResult | null, published: ToleranceLimit | null): GravimetricVolumeResponse['verdict'] {
  const publishedLimit: PublishedLimit = published && {
    source: published.source,
    table: published.table,
    tableId: published.tableId,
    verification: published.verification,
    limitMl: str(published.limitMl),
    randomLimitMl: published.randomLimitMl ? str(published.randomLimitMl) : null,
    note: published.note ?? null,
  };
  if (v === null) {
    const reasons = ['No limit was evaluated; a qualified person decides.'];
    return { verdict: 'no-limit', limitSource: 'none', limitMl: null, randomLimitMl: null, overrideReason: null, reasons, publishedLimit };
  }
  return {
    verdict: v.verdict,
    limitSource: v.limitSource,
    limitMl: v.limitMl && str(v.limitMl),
    randomLimitMl: v.randomLimitMl && str(v.randomLimitMl),
    overrideReason: v.overrideReason ?? null,
    reasons: v.reasons.map(shortenNumbers),
    publishedLimit,
  };
}

/** The library writes full-precision numbers into its reasons; shorten them to the wire rule. */
const shortenNumbers = (text: string): string => text.replace(/-?\d+\.\d{13,}/g, (n) => str(new Decimal(n)));
