/** What the service benchmark and the soak send: the same vessel pages and the same pipette run. */

/** Vessel pages are filtered by one of these kinds and sorted one of these ways, at random. */
export const LISTED_KINDS = ['one-mark-pipette', 'volumetric-flask', 'burette', 'graduated-pipette', 'piston-pipette-variable'];
export const LIST_SORTS = ['assetTag', '-updatedAt', 'nominalVolumeMl', 'createdAt'];

/**
 * Net masses of ten deliveries of a 25 mL class A pipette, g: with water at 20 °C and air at
 * 20 °C and 101.3 kPa (Z about 1.0029 mL/g, ISO 4787 table) the mean is about 25.017 mL, inside
 * the ±0.03 mL of class A (ISO 648), so each run passes and its approval issues a factor.
 */
const NETS_G = ['24.9440', '24.9452', '24.9431', '24.9460', '24.9447', '24.9438', '24.9455', '24.9442', '24.9449', '24.9436'];
const AIR_20C = { temperatureC: '20', pressurePa: '101300', relativeHumidityPercent: '50' };
/** Standard uncertainties of a typical run (common practice for a 0.1 mg balance). */
const UNCERTAINTIES = {
  balanceCalibrationG: '0.0002',
  balanceResolutionG: '0.0001',
  waterTemperatureC: '0.05',
  airDensityKgPerM3: '0.005',
  meniscusMl: '0.005',
  evaporationMl: '0',
};

/** The create body of a 25 mL pipette run of ten replicates on a lab's balance and thermometer. */
export function pipetteRunBody(items: { readonly balanceId: string; readonly thermometerId: string }, vesselId: string, performedAt: Date) {
  return {
    vesselId,
    balanceId: items.balanceId,
    thermometerId: items.thermometerId,
    performedAt: performedAt.toISOString(),
    airConditions: AIR_20C,
    uncertainties: UNCERTAINTIES,
    points: [
      {
        replicates: NETS_G.map((net) => ({
          beforeG: '40.0000',
          afterG: (40 + Number(net)).toFixed(4),
          waterTemperatureC: '20.0',
        })),
      },
    ],
  };
}
