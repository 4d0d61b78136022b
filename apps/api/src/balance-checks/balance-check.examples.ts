import type { ExamplesObject } from '@nestjs/swagger/dist/interfaces/open-api-spec.interface';

/*
 * OpenAPI request examples from the demo scenario: the drinking-water
 * chemistry lab's analytical balance BAL-01 (220 g, d = 0.1 mg) and its E2
 * check weights (CW-E2-100, CW-E2-200). Invented figures that illustrate the
 * shape only: never check values.
 */

const CW_E2_100 = '7c0e9a52-3b1d-4f6e-8a2c-5d4e3f2a1b0c';
const CW_E2_200 = '9a4d2c61-5e7f-4b3a-8c1d-2e3f4a5b6c7d';

export const CHECK_EXAMPLES = {
  usp41: {
    summary: 'Monthly USP <41> check of BAL-01: ten readings of CW-E2-100, accuracy with CW-E2-200, corner loads',
    value: {
      kind: 'usp41',
      referenceWeightId: CW_E2_200,
      repeatability: {
        referenceWeightId: CW_E2_100,
        readingsG: ['100.0001', '99.9999', '100.0000', '100.0002', '100.0000', '99.9999', '100.0001', '100.0000', '100.0001', '99.9998'],
        smallestNetWeightG: '0.5',
      },
      accuracyReadingG: '200.0003',
      eccentricity: { centreReadingG: '100.0000', offCentreReadingsG: ['100.0002', '99.9999', '100.0001', '100.0000'], limitG: '0.0003' },
      performedAt: '2026-03-02T07:45:00Z',
    },
  },
  quick: {
    summary: 'Daily check of BAL-01 before use with CW-E2-100, against the lab’s 0.3 mg limit',
    value: { kind: 'quick', referenceWeightId: CW_E2_100, readingsG: ['100.0001'], limitG: '0.0003' },
  },
  eccentricity: {
    summary: 'Corner-load test of BAL-01 with CW-E2-100 after it was moved',
    value: {
      kind: 'eccentricity',
      referenceWeightId: CW_E2_100,
      centreReadingG: '100.0000',
      offCentreReadingsG: ['100.0002', '99.9999', '100.0001', '100.0000'],
      limitG: '0.0003',
      notes: 'Moved to weighing table 1 and levelled',
    },
  },
} satisfies ExamplesObject;

export const CORRECTION_EXAMPLES = {
  khp: {
    summary: 'Potassium hydrogen phthalate weighed on BAL-01 for a titrant standardisation, air from the room conditions',
    value: {
      readingG: '0.40842',
      objectDensityKgPerM3: '1636',
      airConditions: { temperatureC: '21.8', pressurePa: '98650', relativeHumidityPercent: '41' },
    },
  },
  water: {
    summary: 'Water weighed on BAL-01 with a measured air density',
    value: { readingG: '24.9562', objectDensityKgPerM3: '997.9', airDensityKgPerM3: '1.166' },
  },
} satisfies ExamplesObject;
