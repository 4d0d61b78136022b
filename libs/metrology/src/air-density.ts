import { Decimal, type DecimalInput, dec } from './decimal';
import { MetrologyInputError, type MetrologyWarning, type ValidRange } from './errors';

/*
 * Density of moist air.
 * CIPM-2007: A. Picard, R. S. Davis, M. Gläser, K. Fujii, "Revised formula for the
 * density of moist air (CIPM-2007)", Metrologia 45 (2008) 149-155. Constants checked
 * against public implementations citing the paper: DWD module CIPM_2007 (Fortran,
 * eq. A1.4 coefficients, Ma, Mv, R) and the CRAN package masscor (all constants).
 * Declared range 600-1100 hPa, 15-27 °C (as quoted in the uLPAQ R documentation of
 * the formula); relative humidity 0-100 %.
 * OIML R 111-1 (2004) annex E simplified formula:
 *   rho = (0.34848 p - 0.009 hr exp(0.061 t)) / (273.15 + t), p in hPa, hr in %.
 * Its constants match independent public code; the annex text and its stated range
 * and uncertainty could not be read (from memory: ~2e-4 relative).
 */
const A = new Decimal('1.2378847e-5'); // 1/K^2
const B = new Decimal('-1.9121316e-2'); // 1/K
const C = new Decimal('33.93711047');
const D = new Decimal('-6.3431645e3'); // K
const ALPHA = new Decimal('1.00062');
const BETA = new Decimal('3.14e-8'); // 1/Pa
const GAMMA = new Decimal('5.6e-7'); // 1/K^2
const A0 = new Decimal('1.58123e-6'); // K/Pa
const A1 = new Decimal('-2.9331e-8'); // 1/Pa
const A2 = new Decimal('1.1043e-10'); // 1/(K Pa)
const B0 = new Decimal('5.707e-6'); // K/Pa
const B1 = new Decimal('-2.051e-8'); // 1/Pa
const C0 = new Decimal('1.9898e-4'); // K/Pa
const C1 = new Decimal('-2.376e-6'); // 1/Pa
const DD = new Decimal('1.83e-11'); // K^2/Pa^2
const E = new Decimal('-0.765e-8'); // K^2/Pa^2
const MV = new Decimal('18.01528e-3'); // kg/mol
const R = new Decimal('8.314472'); // J/(mol K)
const KELVIN_OFFSET = new Decimal('273.15');
export const DEFAULT_CO2_MOLE_FRACTION = new Decimal('0.0004');

export const CIPM_2007_RANGE = {
  pressurePa: { min: '60000', max: '110000', unit: 'Pa' },
  temperatureC: { min: '15', max: '27', unit: '°C' },
} as const satisfies Record<string, ValidRange>;
/** Our choice of "near a limit": half a kelvin, 10 hPa (about twice a good field instrument's uncertainty). */
const NEAR = { pressurePa: new Decimal(1000), temperatureC: new Decimal('0.5') } as const;

/** Our choice: the widest conditions computed even on request (about twice the laboratory span). */
const PLAUSIBLE = {
  temperatureC: { min: '-40', max: '60', unit: '°C' },
  pressurePa: { min: '30000', max: '150000', unit: 'Pa' },
} as const satisfies Record<string, ValidRange>;

export type AirDensityMethod = 'cipm-2007' | 'oiml-r111';

export interface AirDensityInput {
  readonly temperatureC: DecimalInput;
  readonly pressurePa: DecimalInput;
  readonly relativeHumidityPercent: DecimalInput;
  /** Mole fraction of CO2 (CIPM-2007 only). Default 0.0004. */
  readonly co2MoleFraction?: DecimalInput;
  readonly method?: AirDensityMethod;
  /**
   * Outside the declared range of CIPM-2007: 'refuse' (default) throws with validRange;
   * 'warn' computes and adds a warning. Physically impossible inputs are always refused.
   */
  readonly outsideDeclaredRange?: 'refuse' | 'warn';
}

export interface CipmIntermediate {
  readonly saturationVapourPressurePa: Decimal;
  readonly enhancementFactor: Decimal;
  readonly vapourMoleFraction: Decimal;
  readonly compressibilityFactor: Decimal;
}

export interface AirDensityResult {
  readonly densityKgPerM3: Decimal;
  readonly method: AirDensityMethod;
  readonly warnings: MetrologyWarning[];
  /** CIPM-2007 intermediate values; null for the OIML simplified formula. */
  readonly intermediate: CipmIntermediate | null;
}

interface Checked {
  t: Decimal;
  p: Decimal;
  h: Decimal;
  warnings: MetrologyWarning[];
}

function checkInputs(input: AirDensityInput, method: AirDensityMethod): Checked {
  const t = dec(input.temperatureC, 'temperatureC');
  const p = dec(input.pressurePa, 'pressurePa');
  const h = dec(input.relativeHumidityPercent, 'relativeHumidityPercent');
  if (t.lessThanOrEqualTo(KELVIN_OFFSET.neg())) throw new MetrologyInputError('temperatureC', 'must be above absolute zero');
  if (p.lessThanOrEqualTo(0)) throw new MetrologyInputError('pressurePa', 'must be greater than 0 Pa', { min: '0', unit: 'Pa' });
  if (h.lessThan(0) || h.greaterThan(100)) {
    throw new MetrologyInputError('relativeHumidityPercent', 'must be between 0 and 100 %', { min: '0', max: '100', unit: '%' });
  }
  // Outside this envelope no request is plausible, whatever the method or option: refuse
  // rather than extrapolate the vapour-pressure exponentials into nonsense.
  for (const [field, value] of [
    ['temperatureC', t],
    ['pressurePa', p],
  ] as const) {
    const env = PLAUSIBLE[field];
    if (value.lessThan(env.min) || value.greaterThan(env.max)) {
      throw new MetrologyInputError(field, `must be between ${env.min} and ${env.max} ${env.unit} for any air-density formula here`, env);
    }
  }
  // The OIML formula approximates CIPM-2007; outside the CIPM range neither is supported,
  // but for the approximation (range not verified) we only warn.
  const refuse = method === 'cipm-2007' && (input.outsideDeclaredRange ?? 'refuse') === 'refuse';
  const warnings: MetrologyWarning[] = [];
  for (const [field, value] of [
    ['temperatureC', t],
    ['pressurePa', p],
  ] as const) {
    const range = CIPM_2007_RANGE[field];
    const min = new Decimal(range.min);
    const max = new Decimal(range.max);
    if (value.lessThan(min) || value.greaterThan(max)) {
      const reason = `must be between ${range.min} and ${range.max} ${range.unit} for CIPM-2007`;
      if (refuse) throw new MetrologyInputError(field, reason, range);
      warnings.push({
        code: 'outside-declared-range',
        field,
        message: `${field} ${value.toString()} is outside the CIPM-2007 range ${range.min}-${range.max} ${range.unit}; computed on request`,
      });
    } else if (value.lessThan(min.plus(NEAR[field])) || value.greaterThan(max.minus(NEAR[field]))) {
      warnings.push({ code: 'near-validity-limit', field, message: `${field} ${value.toString()} is near a limit of the CIPM-2007 range` });
    }
  }
  return { t, p, h, warnings };
}

/** CIPM-2007 saturation vapour pressure over water, Pa (T in K). */
export function saturationVapourPressurePa(temperatureK: Decimal): Decimal {
  const T = temperatureK;
  return A.times(T).times(T).plus(B.times(T)).plus(C).plus(D.div(T)).exp();
}

function cipm2007(input: AirDensityInput): AirDensityResult {
  const { t, p, h, warnings } = checkInputs(input, 'cipm-2007');
  const x = input.co2MoleFraction === undefined ? DEFAULT_CO2_MOLE_FRACTION : dec(input.co2MoleFraction, 'co2MoleFraction');
  if (x.lessThan(0) || x.greaterThanOrEqualTo(1)) throw new MetrologyInputError('co2MoleFraction', 'must be at least 0 and below 1');
  const T = t.plus(KELVIN_OFFSET);
  const psv = saturationVapourPressurePa(T);
  const f = ALPHA.plus(BETA.times(p)).plus(GAMMA.times(t).times(t));
  const xv = h.div(100).times(f).times(psv).div(p);
  if (xv.greaterThanOrEqualTo(1))
    throw new MetrologyInputError('pressurePa', 'is below the water vapour pressure at this temperature and humidity');
  const pT = p.div(T);
  const inner = A0.plus(A1.times(t))
    .plus(A2.times(t).times(t))
    .plus(B0.plus(B1.times(t)).times(xv))
    .plus(C0.plus(C1.times(t)).times(xv).times(xv));
  const Z = new Decimal(1).minus(pT.times(inner)).plus(pT.times(pT).times(DD.plus(E.times(xv).times(xv))));
  const Ma = new Decimal('28.96546').plus(new Decimal('12.011').times(x.minus(DEFAULT_CO2_MOLE_FRACTION))).times('1e-3');
  const rho = p
    .times(Ma)
    .div(Z.times(R).times(T))
    .times(new Decimal(1).minus(xv.times(new Decimal(1).minus(MV.div(Ma)))));
  return {
    densityKgPerM3: rho,
    method: 'cipm-2007',
    warnings,
    intermediate: { saturationVapourPressurePa: psv, enhancementFactor: f, vapourMoleFraction: xv, compressibilityFactor: Z },
  };
}

function oimlR111(input: AirDensityInput): AirDensityResult {
  const { t, p, h, warnings } = checkInputs(input, 'oiml-r111');
  const pHpa = p.div(100);
  const num = new Decimal('0.34848').times(pHpa).minus(new Decimal('0.009').times(h).times(new Decimal('0.061').times(t).exp()));
  if (num.lessThanOrEqualTo(0)) throw new MetrologyInputError('pressurePa', 'is too low for the simplified formula at this humidity');
  return { densityKgPerM3: num.div(KELVIN_OFFSET.plus(t)), method: 'oiml-r111', warnings, intermediate: null };
}

/** Density of moist air in kg/m3, by CIPM-2007 (default) or the OIML R 111-1 simplified formula. */
export function airDensity(input: AirDensityInput): AirDensityResult {
  return (input.method ?? 'cipm-2007') === 'cipm-2007' ? cipm2007(input) : oimlR111(input);
}
