import { Decimal } from '@registry/metrology';

import type { DemoRandom } from './random';

/*
 * Invented readings for the demo: plausible, never check values. A volume V
 * delivered or contained at about 21 °C weighs about V / Z g, Z being roughly
 * 1.0029 mL/g at 20 °C and rising 0.00021 mL/g per kelvin (air 1.2 kg/m3,
 * weights 8000 kg/m3; from memory of the usual Z tables, good enough for
 * invented data). The service computes the volumes itself from these readings.
 */

export interface VesselUnderTest {
  readonly id: string;
  readonly kind: string;
  readonly nominalMl: string;
  readonly material: string;
  readonly deliveryMode: 'contain' | 'deliver';
  /** The vessel's maximum permissible error, mL; null for ware without one. */
  readonly limitMl: string | null;
}

export interface BalanceInUse {
  readonly id: string;
  readonly capacityG: string;
  readonly readabilityG: string;
}

const GRADUATED = new Set(['burette', 'graduated-pipette', 'graduated-cylinder', 'piston-pipette-variable']);
const PISTON = new Set(['piston-pipette-fixed', 'piston-pipette-variable']);

/** Decimals a balance shows: 0.0001 g gives 4. */
const decimalsOf = (readabilityG: string) => Math.max(0, new Decimal(readabilityG).decimalPlaces());

/** About what the empty vessel (to contain) or the weighing beaker (to deliver) weighs, g. */
export function tareG(v: VesselUnderTest): number {
  const ml = Number(v.nominalMl);
  if (v.deliveryMode === 'deliver') return ml <= 5 ? 12 : ml <= 20 ? 28 : 45;
  if (v.kind === 'graduated-cylinder') return v.material === 'polypropylene' ? 0.3 * ml + 25 : 0.7 * ml + 35;
  return 0.3 * ml + 25;
}

/** Whether a lab can weigh the vessel full on this balance (with 5 % headroom). */
export function fitsOn(v: VesselUnderTest, b: BalanceInUse): boolean {
  return tareG(v) + Number(v.nominalMl) * 1.05 <= Number(b.capacityG);
}

/** The volumes tested: the nominal for one-mark ware, 10 %, 50 % and 100 % for graduated ware. */
export function testVolumesMl(v: VesselUnderTest): string[] {
  if (!GRADUATED.has(v.kind)) return [v.nominalMl];
  const nominal = new Decimal(v.nominalMl);
  return ['0.1', '0.5', '1'].map((f) => nominal.times(f).toFixed());
}

export interface RunShape {
  /** Systematic error as a multiple of the limit (|x| > 1 fails). */
  readonly biasOfLimit: number;
  readonly replicates: number;
  readonly waterTemperatureC: number;
}

/** The points of a calibration body: readings on the balance, rounded to what it shows. */
export function calibrationPoints(rnd: DemoRandom, v: VesselUnderTest, b: BalanceInUse, shape: RunShape) {
  const nominal = Number(v.nominalMl);
  // Ware without a class limit still has a working tolerance of about 1 % in the lab.
  const limit = v.limitMl === null ? nominal * 0.01 : Number(v.limitMl);
  const decimals = decimalsOf(b.readabilityG);
  const z = 1.0029 + 0.00021 * (shape.waterTemperatureC - 20);
  const graduated = GRADUATED.has(v.kind);
  return testVolumesMl(v).map((volumeMl) => {
    const share = Number(volumeMl) / nominal;
    const bias = shape.biasOfLimit * limit * (PISTON.has(v.kind) ? share : 1);
    const spread = limit * (PISTON.has(v.kind) ? 0.1 * share : 0.12);
    const tare = tareG(v) + rnd.between(-2, 2);
    const replicates = Array.from({ length: shape.replicates }, () => {
      const netG = (Number(volumeMl) + bias + rnd.normal(0, spread)) / z;
      const waterTemperatureC = (shape.waterTemperatureC + rnd.normal(0, 0.05)).toFixed(2);
      const emptyG = tare + rnd.normal(0, 0.002);
      const low = emptyG.toFixed(decimals);
      const high = (emptyG + netG).toFixed(decimals);
      return v.deliveryMode === 'deliver'
        ? { beforeG: low, afterG: high, waterTemperatureC }
        : { emptyG: low, filledG: high, waterTemperatureC };
    });
    return graduated ? { nominalVolumeMl: volumeMl, replicates } : { replicates };
  });
}

/** Standard uncertainties of a run on this balance (the gravimetric calculation's shape). */
export function runUncertainties(v: VesselUnderTest, b: BalanceInUse) {
  const d = new Decimal(b.readabilityG);
  return {
    balanceCalibrationG: d.times(2).toFixed(),
    // A rectangular distribution over one digit: d / (2·√3).
    balanceResolutionG: d.dividedBy(new Decimal(12).sqrt()).toSignificantDigits(2).toFixed(),
    waterTemperatureC: '0.05',
    airDensityKgPerM3: '0.005',
    meniscusMl: PISTON.has(v.kind) ? '0' : new Decimal(v.nominalMl).times('0.0001').toSignificantDigits(1).toFixed(),
    evaporationMl: '0',
  };
}

/** One reading of a check weight: its conventional mass plus the balance's noise and an offset, rounded. */
export function weightReading(rnd: DemoRandom, conventionalMassG: string, readabilityG: string, offsetG = 0): string {
  const d = Number(readabilityG);
  return (Number(conventionalMassG) + offsetG + rnd.normal(0, d * 0.6)).toFixed(decimalsOf(readabilityG));
}
