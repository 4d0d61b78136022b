import { type AirDensityInput, airDensity } from './air-density';
import { REFERENCE_WEIGHT_DENSITY_KG_PER_M3 } from './buoyancy';
import { type Decimal, type DecimalInput, dec } from './decimal';
import { MetrologyInputError, type MetrologyWarning } from './errors';
import { DEFAULT_REFERENCE_TEMPERATURE_C, type ReplicateReadings, replicateVolume } from './gravimetric';
import { resolveExpansionCoefficient } from './materials';
import { type GrubbsResult, grubbsTest, mean, sampleStandardDeviation } from './statistics';
import { type LabOverride, type VerdictResult, verdict } from './tolerances';
import { type CoverageOptions } from './uncertainty';
import { type VolumeStandardUncertainties, type VolumeUncertaintyResult, evaluateVolumeUncertainty } from './volume-uncertainty';
import { waterDensity } from './water-density';

/**
 * One calibration point of a gravimetric calibration (ISO 4787; ISO 8655-6 for
 * piston pipettes): replicate volumes at the reference temperature, mean,
 * standard deviation, CV, systematic error, Grubbs' report and the cg-19
 * uncertainty budget. It never drops a replicate: an outlier is reported, and
 * a person decides. The acceptance verdict is given only when limits are passed.
 */
export interface GravimetricReplicateInput {
  readonly readings: ReplicateReadings;
  readonly waterTemperatureC: DecimalInput;
}

/** Either a known air density or the conditions to compute it (CIPM-2007 by default). */
export type AirInput = { readonly airDensityKgPerM3: DecimalInput } | { readonly conditions: AirDensityInput };

export interface AcceptanceLimits {
  /** ± limit on the systematic error, mL, or null when none is known. */
  readonly limitMl: DecimalInput | null;
  readonly randomLimitMl?: DecimalInput | null;
  readonly labOverride?: LabOverride;
}

export interface GravimetricPointInput {
  readonly nominalVolumeMl: DecimalInput;
  readonly replicates: readonly GravimetricReplicateInput[];
  readonly air: AirInput;
  /** Default 8000 kg/m³ (OIML R 111-1 convention). */
  readonly weightDensityKgPerM3?: DecimalInput;
  /** A material id from the materials table, or the coefficient itself (exactly one). */
  readonly material?: string;
  readonly expansionCoefficientPerK?: DecimalInput;
  /** Default 20 °C. */
  readonly referenceTemperatureC?: DecimalInput;
  /** Water left standing in air: apply Tanaka's air-saturation correction. Default false. */
  readonly waterAirSaturated?: boolean;
  readonly uncertainties: VolumeStandardUncertainties;
  readonly coverage?: CoverageOptions;
  /** Significance level of Grubbs' test; default 0.05. */
  readonly grubbsAlpha?: DecimalInput;
  readonly acceptance?: AcceptanceLimits;
}

export interface ReplicateResult {
  readonly netMassG: Decimal;
  readonly waterTemperatureC: Decimal;
  readonly waterDensityKgPerM3: Decimal;
  readonly zMlPerG: Decimal;
  readonly volumeMl: Decimal;
}

export interface GravimetricPointResult {
  readonly replicates: readonly ReplicateResult[];
  readonly airDensityKgPerM3: Decimal;
  readonly expansionCoefficientPerK: Decimal;
  readonly expansionCoefficientSource: string;
  /** Mean of the replicate volumes: the calibrated volume. */
  readonly meanVolumeMl: Decimal;
  readonly standardDeviationMl: Decimal;
  readonly cvPercent: Decimal;
  /** mean − nominal. */
  readonly systematicErrorMl: Decimal;
  readonly systematicErrorPercent: Decimal;
  readonly grubbs: GrubbsResult;
  readonly uncertainty: VolumeUncertaintyResult;
  readonly verdict: VerdictResult | null;
  readonly warnings: readonly MetrologyWarning[];
}

export function evaluateGravimetricPoint(input: GravimetricPointInput): GravimetricPointResult {
  if (input.replicates.length < 2) throw new MetrologyInputError('replicates', 'needs at least 2 replicates');
  const nominal = dec(input.nominalVolumeMl, 'nominalVolumeMl');
  if (nominal.lte(0)) throw new MetrologyInputError('nominalVolumeMl', 'must be greater than 0');
  const warnings: MetrologyWarning[] = [];
  const air = resolveAir(input.air, warnings);
  const gamma = resolveExpansionCoefficient({ material: input.material, expansionCoefficientPerK: input.expansionCoefficientPerK });
  const referenceTemperatureC =
    input.referenceTemperatureC === undefined ? DEFAULT_REFERENCE_TEMPERATURE_C : dec(input.referenceTemperatureC, 'referenceTemperatureC');
  const weightDensity =
    input.weightDensityKgPerM3 === undefined ? REFERENCE_WEIGHT_DENSITY_KG_PER_M3 : dec(input.weightDensityKgPerM3, 'weightDensityKgPerM3');
  const airSaturated = input.waterAirSaturated ?? false;
  // Replicates share few distinct temperatures: compute each density once per call.
  const densities = new Map<string, ReturnType<typeof waterDensity>>();
  const rhoW = (t: DecimalInput) => {
    const key = String(t);
    let w = densities.get(key);
    if (!w) {
      w = waterDensity({ temperatureC: t, airSaturated });
      densities.set(key, w);
    }
    return w;
  };

  const replicates = input.replicates.map((r, i): ReplicateResult => {
    const w = rhoW(r.waterTemperatureC);
    const result = replicateVolume({
      readings: r.readings,
      waterTemperatureC: r.waterTemperatureC,
      waterDensityKgPerM3: w.densityKgPerM3,
      airDensityKgPerM3: air,
      weightDensityKgPerM3: weightDensity,
      expansionCoefficientPerK: gamma.expansionCoefficientPerK,
      referenceTemperatureC,
    });
    warnings.push(
      ...[...w.warnings, ...result.warnings].map((x) => ({ ...x, field: `replicates[${i}].${x.field ?? 'waterTemperatureC'}` })),
    );
    return {
      netMassG: result.netMassG,
      waterTemperatureC: result.modelInputs.waterTemperatureC,
      waterDensityKgPerM3: result.modelInputs.waterDensityKgPerM3,
      zMlPerG: result.zMlPerG,
      volumeMl: result.volumeMl,
    };
  });

  const volumes = replicates.map((r) => r.volumeMl);
  // Mean and standard deviation once, for every figure derived from them.
  const meanVolume = mean(volumes);
  const s = sampleStandardDeviation(volumes);
  const meanTemperature = mean(replicates.map((r) => r.waterTemperatureC));
  const uncertainty = evaluateVolumeUncertainty({
    model: {
      netMassG: mean(replicates.map((r) => r.netMassG)),
      waterTemperatureC: meanTemperature,
      waterDensityKgPerM3: rhoW(meanTemperature).densityKgPerM3,
      airDensityKgPerM3: air,
      weightDensityKgPerM3: weightDensity,
      expansionCoefficientPerK: gamma.expansionCoefficientPerK,
      referenceTemperatureC,
    },
    waterDensityAtC: (t) => rhoW(t).densityKgPerM3,
    replicateVolumesMl: volumes,
    replicateStandardDeviationMl: s,
    uncertainties: input.uncertainties,
    ...(input.coverage ? { coverage: input.coverage } : {}),
  });
  const defaults = uncertainty.budget.rows.filter((r) => r.note?.startsWith('default'));
  if (defaults.length > 0) {
    warnings.push({
      code: 'uncertainty-default-used',
      field: 'uncertainties',
      message: `default standard uncertainties used for: ${defaults.map((r) => r.quantity).join(', ')}`,
    });
  }

  const known = { mean: meanVolume, standardDeviation: s };
  const grubbs = grubbsTest(volumes, input.grubbsAlpha === undefined ? { known } : { alpha: input.grubbsAlpha, known });
  if (grubbs.applicable && grubbs.outlier) {
    warnings.push({
      code: 'grubbs-outlier',
      field: `replicates[${grubbs.suspectIndex}]`,
      message: `replicate ${grubbs.suspectIndex + 1} (${grubbs.suspectValue.toSignificantDigits(8).toString()} mL) is an outlier by Grubbs' test (G = ${grubbs.g.toSignificantDigits(4).toString()} > ${grubbs.gCritical.toSignificantDigits(4).toString()}); it is kept, a person decides`,
    });
  }
  if (volumes.length < 3) {
    warnings.push({ code: 'few-replicates', field: 'replicates', message: 'fewer than 3 replicates: repeatability is poorly known' });
  }

  const sysError = meanVolume.minus(nominal);
  const sys = { mean: meanVolume, error: sysError, errorPercent: sysError.div(nominal).times(100) };
  const a = input.acceptance;
  return {
    replicates,
    airDensityKgPerM3: air,
    expansionCoefficientPerK: gamma.expansionCoefficientPerK,
    expansionCoefficientSource: gamma.source,
    meanVolumeMl: sys.mean,
    standardDeviationMl: s,
    cvPercent: s.div(meanVolume).times(100),
    systematicErrorMl: sys.error,
    systematicErrorPercent: sys.errorPercent,
    grubbs,
    uncertainty,
    verdict: a
      ? verdict({
          errorMl: sys.error,
          limitMl: a.limitMl,
          randomErrorMl: s,
          ...(a.randomLimitMl !== undefined ? { randomLimitMl: a.randomLimitMl } : {}),
          ...(a.labOverride ? { labOverride: a.labOverride } : {}),
        })
      : null,
    warnings,
  };
}

function resolveAir(air: AirInput, warnings: MetrologyWarning[]): Decimal {
  if ('airDensityKgPerM3' in air) {
    const rho = dec(air.airDensityKgPerM3, 'air.airDensityKgPerM3');
    if (rho.isNegative()) throw new MetrologyInputError('air.airDensityKgPerM3', 'must not be negative');
    return rho;
  }
  const result = airDensity(air.conditions);
  warnings.push(...result.warnings.map((w) => ({ ...w, field: `air.conditions.${w.field ?? ''}` })));
  return result.densityKgPerM3;
}
