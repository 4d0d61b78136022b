import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { decimalString as dec, quantity, REQUIRED } from '../common/quantity';
import { warnings } from './calculations.responses';

/** At most this many readings per list: a bounded request (USP <41> needs 10). */
export const MAX_READINGS = 100;

const readings = (description: string, max: number) =>
  z.array(quantity(description), REQUIRED).max(max, { error: `accepts at most ${max} readings` });

export const BalanceCheckRequestSchema = z.strictObject({
  readabilityG: quantity('Readability d (scale interval) of the balance, g', '0.0001'),
  replicatesG: readings('A reading of the repeatability test weight, g', MAX_READINGS).meta({
    description: 'At least 10 readings of one test weight (USP <41>), g',
    example: ['100.0001', '99.9999', '100.0000', '100.0002', '100.0000', '99.9999', '100.0001', '100.0000', '100.0001', '99.9998'],
  }),
  testWeightG: quantity('Nominal value of the repeatability test weight, g', '100'),
  smallestNetWeightG: quantity('Smallest net weight the laboratory means to weigh, g; repeatability is then judged against it').optional(),
  capacityG: quantity('Balance capacity, g: the accuracy test weight must be 5 % to 100 % of it').optional(),
  accuracy: z
    .strictObject({
      readingG: quantity('Reading of the accuracy test weight, g', '200.0003'),
      testWeightG: quantity('Certified (conventional) value of the accuracy test weight, g', '200.0000'),
      testWeightMpeG: quantity('MPE or calibration uncertainty of that weight, g: at most a third of the limit').optional(),
    })
    .optional(),
  sensitivity: z
    .strictObject({
      readingG: quantity('Reading of the reference weight, g'),
      referenceWeightG: quantity('Value of the reference weight, g'),
      limitG: quantity("The laboratory's limit on |reading - reference|, g"),
    })
    .optional()
    .meta({ description: "Sensitivity check against the laboratory's own limit" }),
  eccentricity: z
    .strictObject({
      centreReadingG: quantity('Reading with the load at the centre, g'),
      offCentreReadingsG: readings('A reading with the same load off centre, g', 20).min(1, { error: 'needs at least one reading' }),
      limitG: quantity("The laboratory's limit on the largest |off-centre - centre|, g"),
    })
    .optional()
    .meta({ description: "Eccentricity (corner-load) check against the laboratory's own limit" }),
});
export class BalanceCheckRequestDto extends createZodDto(BalanceCheckRequestSchema) {}
export type BalanceCheckRequest = z.output<typeof BalanceCheckRequestSchema>;

const check = <T extends z.ZodRawShape>(shape: T) => z.object({ ...shape, pass: z.boolean() });

export const BalanceCheckResponseSchema = z.object({
  repeatability: check({
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
  }),
  minimumWeightG: dec('2000 · s_used (never below 820 d), g'),
  accuracy: check({
    deviationG: dec('reading - test weight, g'),
    deviationPercent: dec('Deviation, %'),
    limitG: dec('0.10 % of the test weight, g'),
    limitPercent: dec('0.10 %'),
  }).nullable(),
  sensitivity: check({
    deviationG: dec('reading - reference, g'),
    deviationPercent: dec('Deviation, %'),
    limitG: dec('Limit, g'),
  }).nullable(),
  eccentricity: check({
    deviationsG: z.array(dec('off-centre - centre, g')),
    maxDeviationG: dec('Largest |deviation|, g'),
    maxDeviationIndex: z.number().int(),
    limitG: dec('Limit, g'),
  }).nullable(),
  usp41: z
    .enum(['pass', 'fail', 'incomplete'])
    .meta({ description: 'Repeatability and accuracy together; incomplete when accuracy was not given' }),
  labChecks: z.enum(['pass', 'fail', 'not-run']).meta({ description: 'Sensitivity and eccentricity against the laboratory limits' }),
  warnings,
});
export class BalanceCheckResponseDto extends createZodDto(BalanceCheckResponseSchema) {}
export type BalanceCheckResponse = z.input<typeof BalanceCheckResponseSchema>;
