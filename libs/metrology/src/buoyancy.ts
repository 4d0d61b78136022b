import { Decimal, type DecimalInput, dec } from './decimal';
import { MetrologyInputError } from './errors';

/*
 * Air buoyancy and conventional mass.
 * A balance adjusted with weights of density rhoB, reading m' for an object of
 * density rho in air of density rhoA, shows an object of true mass
 *   m = m' (1 - rhoA/rhoB) / (1 - rhoA/rho).
 * Conventional mass (OIML D 28:2004; IUPAC Gold Book "conventional mass"):
 *   mc = m (1 - rho0/rho) / (1 - rho0/rhoc), rho0 = 1.2 kg/m3, rhoc = 8000 kg/m3, 20 °C.
 * Masses are unit-agnostic (grams by the field names); densities in kg/m3.
 */
export const REFERENCE_WEIGHT_DENSITY_KG_PER_M3 = new Decimal(8000);
export const CONVENTIONAL_AIR_DENSITY_KG_PER_M3 = new Decimal('1.2');

const ONE = new Decimal(1);

function positiveDensity(value: DecimalInput, field: string, above: Decimal, aboveName: string): Decimal {
  const d = dec(value, field);
  if (d.lessThanOrEqualTo(above)) {
    throw new MetrologyInputError(field, `must be greater than ${aboveName} (${above.toString()} kg/m3)`, {
      min: above.toString(),
      unit: 'kg/m3',
    });
  }
  return d;
}

function nonNegativeMass(value: DecimalInput, field: string): Decimal {
  const m = dec(value, field);
  if (m.isNegative()) throw new MetrologyInputError(field, 'must not be negative', { min: '0', unit: 'g' });
  return m;
}

export interface BuoyancyInput {
  /** Balance indication, g. */
  readonly readingG: DecimalInput;
  readonly objectDensityKgPerM3: DecimalInput;
  readonly airDensityKgPerM3: DecimalInput;
  /** Density of the weights the balance was adjusted with. Default 8000 kg/m3. */
  readonly weightDensityKgPerM3?: DecimalInput;
}

export interface BuoyancyResult {
  readonly trueMassG: Decimal;
  /** trueMassG - readingG. */
  readonly correctionG: Decimal;
  /** trueMassG / readingG, the factor applied (independent of the reading). */
  readonly factor: Decimal;
}

/** True mass from a balance reading; refuses negative readings and densities not above the air density. */
export function trueMassFromReading(input: BuoyancyInput): BuoyancyResult {
  const reading = nonNegativeMass(input.readingG, 'readingG');
  const rhoA = dec(input.airDensityKgPerM3, 'airDensityKgPerM3');
  if (rhoA.isNegative()) throw new MetrologyInputError('airDensityKgPerM3', 'must not be negative', { min: '0', unit: 'kg/m3' });
  const rho = positiveDensity(input.objectDensityKgPerM3, 'objectDensityKgPerM3', rhoA, 'the air density');
  const rhoB =
    input.weightDensityKgPerM3 === undefined
      ? REFERENCE_WEIGHT_DENSITY_KG_PER_M3
      : positiveDensity(input.weightDensityKgPerM3, 'weightDensityKgPerM3', rhoA, 'the air density');
  const factor = ONE.minus(rhoA.div(rhoB)).div(ONE.minus(rhoA.div(rho)));
  const trueMass = reading.times(factor);
  return { trueMassG: trueMass, correctionG: trueMass.minus(reading), factor };
}

/** Conventional mass (OIML D 28) of a body of true mass m and density rho. */
export function conventionalMassFromTrueMass(input: { readonly massG: DecimalInput; readonly densityKgPerM3: DecimalInput }): Decimal {
  const m = nonNegativeMass(input.massG, 'massG');
  const rho = positiveDensity(input.densityKgPerM3, 'densityKgPerM3', CONVENTIONAL_AIR_DENSITY_KG_PER_M3, 'the conventional air density');
  const rho0 = CONVENTIONAL_AIR_DENSITY_KG_PER_M3;
  return m.times(ONE.minus(rho0.div(rho))).div(ONE.minus(rho0.div(REFERENCE_WEIGHT_DENSITY_KG_PER_M3)));
}

/** True mass from a conventional mass (e.g. a weight certificate) and the body's density; inverse of the above. */
export function trueMassFromConventionalMass(input: {
  readonly conventionalMassG: DecimalInput;
  readonly densityKgPerM3: DecimalInput;
}): Decimal {
  const mc = nonNegativeMass(input.conventionalMassG, 'conventionalMassG');
  const rho = positiveDensity(input.densityKgPerM3, 'densityKgPerM3', CONVENTIONAL_AIR_DENSITY_KG_PER_M3, 'the conventional air density');
  const rho0 = CONVENTIONAL_AIR_DENSITY_KG_PER_M3;
  return mc.times(ONE.minus(rho0.div(REFERENCE_WEIGHT_DENSITY_KG_PER_M3))).div(ONE.minus(rho0.div(rho)));
}
