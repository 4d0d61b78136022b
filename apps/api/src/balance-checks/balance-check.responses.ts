import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { decimalString as dec } from '../common/quantity';
import { ITEM_STATUSES, pageOf } from '../inventory/inventory.schemas';
import { OIML_CLASSES } from '../reference-weights/reference-weight.schemas';
import { ImpactSchema } from '../impact/impact.schemas';
import { namedDto } from './balance-check.schemas';

/*
 * A recorded check as stored and returned: the inputs as used (with a snapshot
 * of the weight and of the balance's capacity and readability at the time),
 * the results computed by the metrology library, and what the check did to
 * the balance. Quantities are decimal strings with the unit in the name.
 */

const weightUsed = z.object({
  id: z.uuid(),
  assetTag: z.string(),
  oimlClass: z.enum(OIML_CLASSES),
  nominalMassG: dec('Nominal mass, g'),
  valueG: dec('The value the readings are compared with, g'),
  valueSource: z
    .enum(['certificate', 'nominal'])
    .meta({ description: 'certificate: the conventional mass on its certificate; nominal: no certified value recorded' }),
  expandedUncertaintyG: dec('Expanded uncertainty of the certified value, g').nullable(),
  certificateDue: z.string().meta({ description: 'Certificate due date (YYYY-MM-DD) when the check was recorded' }),
});

const balanceUsed = z.object({
  capacityG: dec('Capacity of the balance at the time, g'),
  readabilityG: dec('Readability d of the balance at the time, g'),
});

const eccentricityInputs = {
  centreReadingG: dec('Centre reading, g'),
  offCentreReadingsG: z.array(dec('Off-centre reading, g')),
  limitG: dec('Limit, g'),
};
const eccentricityResults = z.object({
  deviationsG: z.array(dec('off-centre − centre, g')),
  maxDeviationG: dec('Largest |deviation|, g'),
  maxDeviationIndex: z.number().int().meta({ description: 'Position (0-based) of the largest deviation in offCentreReadingsG' }),
  limitG: dec('Limit, g'),
  pass: z.boolean(),
});

const quickInputs = z.object({
  referenceWeight: weightUsed,
  balance: balanceUsed,
  readingsG: z.array(dec('Reading, g')),
  limitG: dec('Limit, g'),
});
const quickResults = z.object({
  readings: z.array(
    z.object({
      readingG: dec('Reading, g'),
      deviationG: dec('reading − certified value, g'),
      deviationPercent: dec('Deviation, %'),
      pass: z.boolean(),
    }),
  ),
  maxDeviationG: dec('Largest |deviation|, g'),
  limitG: dec('Limit, g'),
  pass: z.boolean(),
});

const usp41Inputs = z.object({
  referenceWeight: weightUsed,
  repeatabilityWeight: weightUsed,
  balance: balanceUsed,
  repeatabilityReadingsG: z.array(dec('Replicate reading, g')),
  smallestNetWeightG: dec('Smallest net weight, g').nullable(),
  accuracyReadingG: dec('Reading of the accuracy weight, g'),
  eccentricity: z.object(eccentricityInputs).nullable(),
});
const usp41Results = z.object({
  repeatability: z.object({
    n: z.number().int(),
    meanG: dec('Mean reading, g'),
    standardDeviationG: dec('Sample standard deviation s, g'),
    sFloorG: dec('0.41 d, g'),
    sUsedG: dec('max(s, 0.41 d), g'),
    floorApplied: z.boolean(),
    referenceMassG: dec('Mass the repeatability is judged against, g'),
    relativeTo: z.enum(['smallest-net-weight', 'test-weight']),
    relativeRepeatabilityPercent: dec('100 · 2 · s_used / reference mass, %'),
    limitPercent: dec('0.10 %'),
    pass: z.boolean(),
  }),
  minimumWeightG: dec('2000 · s_used (never below 820 d), g'),
  accuracy: z.object({
    testWeightG: dec('Certified value of the accuracy weight, g'),
    readingG: dec('Reading, g'),
    deviationG: dec('reading − test weight, g'),
    deviationPercent: dec('Deviation, %'),
    limitG: dec('0.10 % of the test weight, g'),
    limitPercent: dec('0.10 %'),
    pass: z.boolean(),
  }),
  eccentricity: eccentricityResults.nullable(),
  pass: z.boolean(),
});

const eccentricityInputsSchema = z.object({ referenceWeight: weightUsed, balance: balanceUsed, ...eccentricityInputs });

export const BalanceStatusOutcomeSchema = z
  .object({
    before: z.enum(ITEM_STATUSES),
    after: z.enum(ITEM_STATUSES),
    reason: z.string().meta({ description: 'Why the status changed or stayed' }),
  })
  .meta({ description: 'What the check did to the balance’s status' });

const recorded = {
  id: z.uuid(),
  labId: z.uuid(),
  balanceId: z.uuid(),
  performedAt: z.iso.datetime(),
  performedBy: z.object({ id: z.uuid(), displayName: z.string() }),
  referenceWeightId: z.uuid(),
  passed: z.boolean(),
  minimumWeightG: dec('Minimum weight derived by a USP <41> check, g').nullable(),
  minimumWeightStored: z.boolean().meta({ description: 'True when this check set the balance’s minimum weight (passing USP <41> checks)' }),
  balanceStatus: BalanceStatusOutcomeSchema,
  impact: ImpactSchema.nullable().meta({ description: 'For a failing check: what may be wrong, marked for review; null when it passed' }),
  libraryVersion: z.string().meta({ description: 'Version of the metrology library that computed the results', example: '1.0.0' }),
  notes: z.string().nullable(),
  createdAt: z.iso.datetime(),
};

export const BalanceCheckSchema = z.discriminatedUnion('kind', [
  z.object({ kind: z.literal('quick'), ...recorded, inputs: quickInputs, results: quickResults }),
  z.object({ kind: z.literal('usp41'), ...recorded, inputs: usp41Inputs, results: usp41Results }),
  z.object({ kind: z.literal('eccentricity'), ...recorded, inputs: eccentricityInputsSchema, results: eccentricityResults }),
]);
/** A union cannot be a class; @ZodResponse takes the DTO value. */
export const BalanceCheckDto = namedDto('BalanceCheckDto', createZodDto(BalanceCheckSchema));
export type BalanceCheckView = z.input<typeof BalanceCheckSchema>;
export class BalanceCheckPageDto extends createZodDto(pageOf(BalanceCheckSchema)) {}

/** What the evaluation stores in `inputs` and `results`, by kind. */
export type QuickInputs = z.input<typeof quickInputs>;
export type QuickResults = z.input<typeof quickResults>;
export type Usp41Inputs = z.input<typeof usp41Inputs>;
export type Usp41Results = z.input<typeof usp41Results>;
export type EccentricityInputs = z.input<typeof eccentricityInputsSchema>;
export type EccentricityResults = z.input<typeof eccentricityResults>;
export type WeightUsed = z.input<typeof weightUsed>;
export type BalanceUsed = z.input<typeof balanceUsed>;
export type BalanceStatusOutcome = z.input<typeof BalanceStatusOutcomeSchema>;
