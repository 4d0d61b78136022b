import type { ExamplesObject } from '@nestjs/swagger/dist/interfaces/open-api-spec.interface';

/*
 * OpenAPI request examples. Invented figures from the demo scenario (the
 * drinking-water chemistry lab of a fictional municipal water authority: a 25 mL
 * one-mark pipette, a 100 mL volumetric flask, a 50 mL burette and an analytical
 * balance with d = 0.1 mg). They illustrate the shape only: never check values.
 */

const labAir = { temperatureC: '21.8', pressurePa: '98650', relativeHumidityPercent: '41' };

const uncertainties = {
  balanceCalibrationG: '0.00015',
  balanceResolutionG: '0.0001',
  waterTemperatureC: '0.05',
  airDensityKgPerM3: '0.005',
  meniscusMl: '0.004',
  evaporationMl: '0.0005',
};

/** One named example; the literal type is kept so that tests can reuse the bodies. */
const example = <T>(summary: string, value: T) => ({ demo: { summary, value } }) satisfies ExamplesObject;

export const EXAMPLES = {
  waterDensity: example('Water for a pipette calibration at 21.4 °C', { temperatureC: '21.4' }),
  airDensity: example('Balance room of the drinking-water lab', labAir),
  zFactor: example('Z for the pipette calibration, air computed from the room conditions', {
    waterTemperatureC: '21.4',
    airConditions: labAir,
  }),
  gravimetricVolume: {
    pipette: {
      summary: '25 mL one-mark pipette, class AS, five deliveries',
      value: {
        deliveryMode: 'deliver',
        nominalVolumeMl: '25',
        replicates: [
          { beforeG: '40.1234', afterG: '65.0330', waterTemperatureC: '21.4' },
          { beforeG: '38.9902', afterG: '63.8990', waterTemperatureC: '21.4' },
          { beforeG: '39.5517', afterG: '64.4611', waterTemperatureC: '21.5' },
          { beforeG: '40.0021', afterG: '64.9098', waterTemperatureC: '21.5' },
          { beforeG: '39.7788', afterG: '64.6871', waterTemperatureC: '21.5' },
        ],
        airConditions: labAir,
        material: 'borosilicate-3-3',
        vesselKind: 'one-mark-pipette',
        accuracyClass: 'AS',
        uncertainties,
      },
    },
    flask: {
      summary: '100 mL volumetric flask, class A, weighed filled and empty',
      value: {
        deliveryMode: 'contain',
        nominalVolumeMl: 100,
        replicates: [
          { filledG: '159.6124', emptyG: '59.9050', waterTemperatureC: '21.2' },
          { filledG: '159.6141', emptyG: '59.9052', waterTemperatureC: '21.2' },
          { filledG: '159.6109', emptyG: '59.9049', waterTemperatureC: '21.3' },
        ],
        airDensityKgPerM3: '1.166',
        material: 'borosilicate-3-3',
        vesselKind: 'volumetric-flask',
        accuracyClass: 'A',
        uncertainties: { ...uncertainties, meniscusMl: '0.008' },
      },
    },
    burette: {
      summary: '50 mL burette at its full-scale point, with the lab’s own tighter limit',
      value: {
        deliveryMode: 'deliver',
        nominalVolumeMl: '50',
        replicates: [
          { beforeG: '51.2040', afterG: '101.0412', waterTemperatureC: '21.6' },
          { beforeG: '50.8871', afterG: '100.7260', waterTemperatureC: '21.6' },
          { beforeG: '51.0013', afterG: '100.8379', waterTemperatureC: '21.7' },
        ],
        airConditions: labAir,
        material: 'borosilicate-3-3',
        limitMl: '0.04',
        limitReason: 'in-house limit for the burette used to standardise titrants',
        uncertainties: { ...uncertainties, meniscusMl: '0.006' },
      },
    },
  } satisfies ExamplesObject,
  buoyancy: example('Potassium hydrogen phthalate weighed for a titrant standardisation', {
    readingG: '0.40842',
    objectDensityKgPerM3: '1636',
    airConditions: labAir,
  }),
  conventionalMass: example('True mass of the lab’s 100 g check weight from its certificate', {
    conventionalMassG: '100.00012',
    densityKgPerM3: '7950',
  }),
  balanceCheck: example('Monthly check of the analytical balance (d = 0.1 mg, 220 g)', {
    readabilityG: '0.0001',
    replicatesG: ['100.0001', '99.9999', '100.0000', '100.0002', '100.0000', '99.9999', '100.0001', '100.0000', '100.0001', '99.9998'],
    testWeightG: '100',
    smallestNetWeightG: '0.5',
    capacityG: '220',
    accuracy: { readingG: '200.0003', testWeightG: '200.0000' },
    eccentricity: { centreReadingG: '100.0000', offCentreReadingsG: ['100.0002', '99.9999', '100.0001', '100.0000'], limitG: '0.0003' },
  }),
};
