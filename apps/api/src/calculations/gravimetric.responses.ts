import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { decimalString as dec } from '../common/quantity';
import { warnings } from './calculations.responses';

const ReplicateResultSchema = z.object({
  index: z.number().int().meta({ description: 'Position in the request, from 0' }),
  netMassG: dec('Net mass of water, g'),
  waterTemperatureC: dec('Water temperature, °C'),
  waterDensityKgPerM3: dec('Water density at that temperature, kg/m3'),
  zFactorMlPerG: dec('Z factor, mL/g'),
  volumeMl: dec('Volume at the reference temperature, mL'),
});

const BudgetRowSchema = z.object({
  quantity: z.string(),
  symbol: z.string(),
  unit: z.string().meta({ description: 'Unit of value and standardUncertainty' }),
  value: dec('Estimate of the input'),
  standardUncertainty: dec('Standard uncertainty u(x), in `unit`'),
  distribution: z.enum(['normal', 'rectangular', 'triangular', 'type-a']),
  degreesOfFreedom: dec('Degrees of freedom').nullable().meta({ description: 'Degrees of freedom; null when infinite' }),
  sensitivityCoefficient: dec('c = ∂V/∂x, mL per `unit`'),
  contributionMl: dec('|c·u(x)|, mL'),
  share: dec('contribution² / u_c², 0 to 1'),
  note: z.string().nullable().meta({ description: 'Set when a documented default was used' }),
});

const OutlierReportSchema = z.object({
  test: z.literal('grubbs'),
  applicable: z.boolean(),
  reason: z.string().nullable().meta({ description: 'Why the test was not applied (fewer than 3 replicates)' }),
  alpha: dec('Significance level').nullable(),
  suspectIndex: z.number().int().nullable().meta({ description: 'Replicate farthest from the mean' }),
  suspectVolumeMl: dec('Its volume, mL').nullable(),
  g: dec('G = max|V - mean| / s').nullable(),
  gCritical: dec('Critical G, two-sided').nullable(),
  outlier: z.boolean().meta({ description: 'G > critical G. The replicate is kept in every result: a person decides.' }),
});

const VerdictSchema = z.object({
  verdict: z.enum(['pass', 'fail', 'no-limit']),
  limitSource: z.enum(['table', 'lab-override', 'none']),
  limitMl: dec('± limit on the systematic error that was applied, mL').nullable(),
  randomLimitMl: dec('Limit on the standard deviation that was applied, mL').nullable(),
  overrideReason: z.string().nullable(),
  reasons: z.array(z.string()),
  publishedLimit: z
    .object({
      source: z.string(),
      table: z.string(),
      tableId: z.string(),
      verification: z.enum(['checked', 'from-memory']),
      limitMl: dec('Published ± limit, mL'),
      randomLimitMl: dec('Published random-error limit, mL').nullable(),
      note: z.string().nullable(),
    })
    .nullable()
    .meta({
      description: 'The published class limit found for vesselKind, accuracyClass and nominalVolumeMl; null if none was asked or found',
    }),
});

export const GravimetricVolumeResponseSchema = z.object({
  deliveryMode: z.enum(['contain', 'deliver']),
  nominalVolumeMl: dec('Nominal volume, mL'),
  referenceTemperatureC: dec('Reference temperature, °C'),
  airDensityKgPerM3: dec('Air density used, kg/m3'),
  airDensitySource: z.enum(['given', 'cipm-2007', 'oiml-r111']),
  weightDensityKgPerM3: dec('Weight density used, kg/m3'),
  expansionCoefficientPerK: dec('Cubic expansion coefficient used, 1/K'),
  expansionCoefficientSource: z.string(),
  replicates: z.array(ReplicateResultSchema),
  meanVolumeMl: dec('Mean replicate volume: the calibrated volume, mL'),
  standardDeviationMl: dec('Sample standard deviation of the replicate volumes (random error), mL'),
  cvPercent: dec('Coefficient of variation, %'),
  systematicErrorMl: dec('mean - nominal, mL'),
  systematicErrorPercent: dec('100 (mean - nominal) / nominal, %'),
  uncertaintyBudget: z.array(BudgetRowSchema),
  combinedStandardUncertaintyMl: dec('u_c, mL'),
  effectiveDegreesOfFreedom: dec('Welch-Satterthwaite ν_eff').nullable().meta({ description: 'ν_eff; null when infinite' }),
  coverageProbability: dec('Coverage probability'),
  coverageFactor: dec('k'),
  coverageRule: z.string(),
  expandedUncertaintyMl: dec('U = k u_c, mL'),
  relativeExpandedUncertaintyPercent: dec('100 U / V, %'),
  outliers: OutlierReportSchema,
  verdict: VerdictSchema,
  warnings,
});
export class GravimetricVolumeResponseDto extends createZodDto(GravimetricVolumeResponseSchema) {}
export type GravimetricVolumeResponse = z.input<typeof GravimetricVolumeResponseSchema>;
export type PublishedLimit = z.input<typeof VerdictSchema>['publishedLimit'];
