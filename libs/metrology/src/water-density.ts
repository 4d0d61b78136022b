import { Decimal, type DecimalInput, dec } from './decimal';
import { MetrologyInputError, type MetrologyWarning } from './errors';

/*
 * Density of water: M. Tanaka, G. Girard, R. Davis, A. Peuto, N. Bignell,
 * "Recommended table for the density of water between 0 °C and 40 °C based on
 * recent experimental reports", Metrologia 38 (2001) 301-309.
 *
 * Air-free water of SMOW isotopic composition at 101 325 Pa:
 *   rho = a5 [1 - (t + a1)^2 (t + a2) / (a3 (t + a4))]
 * Constants checked against independent published copies of the paper's values: the constants
 * a1..a5 as printed in warsa.de "Water properties" tutorial and in chempy's
 * water_density_tanaka_2001; the compressibility factor k0..k2 and the
 * air-saturation constants s0, s1 (valid 0-25 °C) as given on
 * metgen.pagesperso-orange.fr "metrologieen19" (section "CIPM formula").
 */
const A1 = new Decimal('-3.983035'); // °C
const A2 = new Decimal('301.797'); // °C
const A3 = new Decimal('522528.9'); // °C^2
const A4 = new Decimal('69.34881'); // °C
const A5 = new Decimal('999.974950'); // kg/m3

/** Air-saturated minus air-free density: s0 + s1 t (kg/m3), stated for 0-25 °C. */
const S0 = new Decimal('-4.612e-3'); // kg/m3
const S1 = new Decimal('0.106e-3'); // kg/(m3 °C)
const AIR_SATURATION_MAX_C = 25;

/** Compressibility: factor 1 + (k0 + k1 t + k2 t^2)(p - 101325 Pa). */
const K0 = new Decimal('50.74e-11'); // 1/Pa
const K1 = new Decimal('-0.326e-11'); // 1/(Pa °C)
const K2 = new Decimal('0.00416e-11'); // 1/(Pa °C^2)
export const STANDARD_ATMOSPHERE_PA = new Decimal(101325);

const T_MIN_C = 0;
const T_MAX_C = 40;
/** Our choice: warn within this margin of a validity limit (measurement uncertainty of t is ~0.1-0.2 °C). */
const NEAR_LIMIT_C = new Decimal('0.5');

export interface WaterDensityInput {
  /** Water temperature, ITS-90, °C. Valid 0-40 °C. */
  readonly temperatureC: DecimalInput;
  /** Absolute pressure on the water, Pa. Default 101 325 Pa (no compressibility correction). */
  readonly pressurePa?: DecimalInput;
  /** Apply the air-saturation correction (water left standing in air). Default false (air-free). */
  readonly airSaturated?: boolean;
}

export interface WaterDensityResult {
  readonly densityKgPerM3: Decimal;
  readonly method: 'tanaka-2001';
  readonly warnings: MetrologyWarning[];
  /** The parts of the result, for records and uncertainty budgets. */
  readonly terms: {
    readonly airFreeAtStandardPressureKgPerM3: Decimal;
    readonly airSaturationCorrectionKgPerM3: Decimal;
    readonly compressibilityFactor: Decimal;
  };
}

/** Tanaka et al. (2001) air-free density at 101 325 Pa, no range check (for internal use and sweeps). */
export function tanakaAirFreeDensity(t: Decimal): Decimal {
  const x = t.plus(A1);
  return A5.times(
    new Decimal(1).minus(
      x
        .times(x)
        .times(t.plus(A2))
        .div(A3.times(t.plus(A4))),
    ),
  );
}

/**
 * Density of water in kg/m3 by Tanaka et al. (2001). Refuses t outside 0-40 °C
 * (with validRange) and non-positive pressures; warns near the limits and when
 * the air-saturation correction is used above 25 °C.
 * With both corrections: rho = (rho_airfree + delta_air) * compressibility factor
 * (the order changes the result by less than 1e-9 kg/m3 at laboratory pressures).
 */
export function waterDensity(input: WaterDensityInput): WaterDensityResult {
  const t = dec(input.temperatureC, 'temperatureC');
  if (t.lessThan(T_MIN_C) || t.greaterThan(T_MAX_C)) {
    throw new MetrologyInputError('temperatureC', `must be between ${T_MIN_C} and ${T_MAX_C} °C for Tanaka et al. (2001)`, {
      min: String(T_MIN_C),
      max: String(T_MAX_C),
      unit: '°C',
    });
  }
  const warnings: MetrologyWarning[] = [];
  if (t.lessThan(NEAR_LIMIT_C.plus(T_MIN_C)) || t.greaterThan(new Decimal(T_MAX_C).minus(NEAR_LIMIT_C))) {
    warnings.push({
      code: 'near-validity-limit',
      field: 'temperatureC',
      message: `water temperature ${t.toString()} °C is within ${NEAR_LIMIT_C.toString()} °C of the 0-40 °C validity range`,
    });
  }

  const airFree = tanakaAirFreeDensity(t);

  let airCorrection = new Decimal(0);
  if (input.airSaturated) {
    airCorrection = S0.plus(S1.times(t));
    if (t.greaterThan(AIR_SATURATION_MAX_C)) {
      warnings.push({
        code: 'air-saturation-extrapolated',
        field: 'temperatureC',
        message: `the air-saturation correction is stated for 0-${AIR_SATURATION_MAX_C} °C and is extrapolated at ${t.toString()} °C`,
      });
    }
  }

  let compressibility = new Decimal(1);
  if (input.pressurePa !== undefined) {
    const p = dec(input.pressurePa, 'pressurePa');
    if (p.lessThanOrEqualTo(0)) throw new MetrologyInputError('pressurePa', 'must be greater than 0 Pa', { min: '0', unit: 'Pa' });
    const kappa = K0.plus(K1.times(t)).plus(K2.times(t).times(t));
    compressibility = new Decimal(1).plus(kappa.times(p.minus(STANDARD_ATMOSPHERE_PA)));
  }

  return {
    densityKgPerM3: airFree.plus(airCorrection).times(compressibility),
    method: 'tanaka-2001',
    warnings,
    terms: {
      airFreeAtStandardPressureKgPerM3: airFree,
      airSaturationCorrectionKgPerM3: airCorrection,
      compressibilityFactor: compressibility,
    },
  };
}
