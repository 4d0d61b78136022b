import { ACCURACY_CLASSES, type AccuracyClass, VESSEL_KINDS, VESSEL_MATERIALS, type VesselKind } from '@registry/metrology';
import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { quantity, REQUIRED } from '../common/quantity';
import { airDensityOrConditions, exactlyOne } from './calculations.schemas';

/** A request holds 2 to 50 replicates: enough for any published procedure, and a bounded amount of work. */
export const MIN_REPLICATES = 2;
export const MAX_REPLICATES = 50;

const waterTemperatureC = quantity('Water temperature of this replicate, °C (0 to 40)', '21.4');

/** One replicate: filledG + emptyG when deliveryMode is "contain", beforeG + afterG when "deliver". */
const ReplicateSchema = z.strictObject({
  filledG: quantity('contain: balance reading with the vessel filled to the mark, g', '159.7012').optional(),
  emptyG: quantity('contain: balance reading with the vessel empty (dry), g', '59.9050').optional(),
  beforeG: quantity('deliver: weighing vessel before receiving the delivery, g', '40.1234').optional(),
  afterG: quantity('deliver: weighing vessel after receiving the delivery, g', '65.0140').optional(),
  waterTemperatureC,
});

const READINGS = { contain: ['filledG', 'emptyG'], deliver: ['beforeG', 'afterG'] } as const;

const replicates = z
  .array(ReplicateSchema, REQUIRED)
  .min(MIN_REPLICATES, { error: `needs at least ${MIN_REPLICATES} replicates` })
  .max(MAX_REPLICATES, { error: `accepts at most ${MAX_REPLICATES} replicates` })
  .meta({ description: `${MIN_REPLICATES} to ${MAX_REPLICATES} replicates, each with the two readings of its deliveryMode` });

const UncertaintiesSchema = z.strictObject(
  {
    balanceCalibrationG: quantity('Standard uncertainty of a net mass from the balance certificate, g', '0.00015'),
    balanceResolutionG: quantity('Scale interval d of the balance, g (two readings: u = d/√6)', '0.0001'),
    waterTemperatureC: quantity('Standard uncertainty of the thermometer, °C', '0.05'),
    waterDensityKgPerM3: quantity('Standard uncertainty of the water-density formula, kg/m3; default 4.5e-4').optional(),
    airDensityKgPerM3: quantity('Standard uncertainty of the air density, kg/m3', '0.005'),
    weightDensityKgPerM3: quantity('Standard uncertainty of the weight density, kg/m3; default 60/√3 (±60 rectangular)').optional(),
    expansionCoefficientPerK: quantity('Standard uncertainty of the expansion coefficient, 1/K; default 10 %/√3 of it').optional(),
    meniscusMl: quantity('Standard uncertainty of setting the meniscus, as a volume, mL', '0.004'),
    evaporationMl: quantity('Standard uncertainty from evaporation during weighing, mL (may be 0)', '0.0005'),
  },
  REQUIRED,
);

const MATERIAL_IDS = VESSEL_MATERIALS.map((m) => m.id) as [string, ...string[]];

const PointSchema = z.strictObject({
  deliveryMode: z.enum(['contain', 'deliver'], REQUIRED).meta({
    description:
      'contain: adjusted to contain (In, TC), weighed filled and empty; deliver: adjusted to deliver (Ex, TD), the delivery weighed',
  }),
  replicates,
  nominalVolumeMl: quantity('Nominal volume of the vessel (or of the tested point), mL', '25'),
  ...airDensityOrConditions,
  weightDensityKgPerM3: quantity('Density of the balance adjustment weights, kg/m3; default 8000').optional(),
  material: z
    .enum(MATERIAL_IDS)
    .optional()
    .meta({ description: 'Vessel material (see GET /v1/reference/materials), or give expansionCoefficientPerK' }),
  expansionCoefficientPerK: quantity('Cubic expansion coefficient of the vessel, 1/K (or give material)').optional(),
  referenceTemperatureC: quantity('Reference temperature of the volume, °C; default 20').optional(),
  waterAirSaturated: z
    .boolean()
    .optional()
    .meta({ description: 'Water left standing in air: apply the air-saturation correction; default false' }),
  vesselKind: z
    .enum(VESSEL_KINDS as [VesselKind, ...VesselKind[]])
    .optional()
    .meta({ description: 'With accuracyClass: look up the published limit' }),
  accuracyClass: z
    .enum(ACCURACY_CLASSES as [AccuracyClass, ...AccuracyClass[]])
    .optional()
    .meta({ description: 'With vesselKind: look up the published limit' }),
  toleranceStandard: z.string().min(1).max(40).optional().meta({
    description: 'Family (ISO, the default; ASTM; USP), standard ("ISO 648:2008") or table id (see GET /v1/reference/tolerances)',
  }),
  limitMl: quantity("The laboratory's own ± limit on the systematic error, mL; replaces the published one").optional(),
  randomLimitMl: quantity("The laboratory's limit on the standard deviation, mL (with limitMl)").optional(),
  limitReason: z
    .string()
    .trim()
    .min(1)
    .max(500)
    .optional()
    .meta({ description: 'Why the laboratory sets its own limit (required with limitMl)' }),
  uncertainties: UncertaintiesSchema.meta({ description: 'Standard uncertainties of the inputs (EURAMET cg-19 components)' }),
  grubbsAlpha: quantity("Significance level of Grubbs' outlier test; default 0.05").optional(),
});

type Point = z.output<typeof PointSchema>;

/** Each replicate carries exactly the readings of the delivery mode. */
function readingsOfMode(value: Point, ctx: z.RefinementCtx): void {
  const other = value.deliveryMode === 'contain' ? 'deliver' : 'contain';
  value.replicates.forEach((r, i) => {
    for (const field of READINGS[value.deliveryMode]) {
      if (r[field] === undefined)
        ctx.addIssue({
          code: 'custom',
          path: ['replicates', i, field],
          message: `is required when deliveryMode is "${value.deliveryMode}"`,
        });
    }
    for (const field of READINGS[other]) {
      if (r[field] !== undefined)
        ctx.addIssue({
          code: 'custom',
          path: ['replicates', i, field],
          message: `is not used when deliveryMode is "${value.deliveryMode}"`,
        });
    }
  });
}

function consistentLimits(value: Point, ctx: z.RefinementCtx): void {
  const issue = (field: string, message: string) => ctx.addIssue({ code: 'custom', path: [field], message });
  if ((value.vesselKind === undefined) !== (value.accuracyClass === undefined)) {
    issue(value.vesselKind === undefined ? 'vesselKind' : 'accuracyClass', 'give vesselKind and accuracyClass together');
  }
  if (value.toleranceStandard !== undefined && value.vesselKind === undefined)
    issue('toleranceStandard', 'needs vesselKind and accuracyClass');
  if (value.limitMl !== undefined && value.limitReason === undefined) issue('limitReason', 'is required with limitMl');
  if (value.limitMl === undefined && value.limitReason !== undefined) issue('limitMl', 'is required with limitReason');
  if (value.randomLimitMl !== undefined && value.limitMl === undefined) issue('limitMl', 'is required with randomLimitMl');
}

export const GravimetricVolumeRequestSchema = PointSchema.superRefine(readingsOfMode)
  .superRefine(exactlyOne('airDensityKgPerM3', 'airConditions'))
  .superRefine(exactlyOne('material', 'expansionCoefficientPerK'))
  .superRefine(consistentLimits);
export class GravimetricVolumeRequestDto extends createZodDto(GravimetricVolumeRequestSchema) {}
export type GravimetricVolumeRequest = z.output<typeof GravimetricVolumeRequestSchema>;
