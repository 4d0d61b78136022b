import { Decimal, type DecimalInput, dec } from './decimal';
import { MetrologyInputError } from './errors';

/** The kinds of quantity people type into the registry. */
export type Dimension = 'temperature' | 'pressure' | 'volume' | 'mass' | 'relativeHumidity';

/** Canonical unit per dimension: every parsed quantity is returned in it. */
export const CANONICAL_UNITS = {
  temperature: '°C',
  pressure: 'Pa',
  volume: 'mL',
  mass: 'g',
  relativeHumidity: '%',
} as const;

export type CanonicalUnit<D extends Dimension = Dimension> = (typeof CANONICAL_UNITS)[D];

/** A value in the canonical unit of its dimension. */
export interface Quantity<D extends Dimension = Dimension> {
  readonly value: Decimal;
  readonly unit: CanonicalUnit<D>;
}

/** canonical = value * factor + offset. */
interface UnitDef {
  readonly id: string;
  readonly dimension: Dimension;
  readonly factor: Decimal;
  readonly offset: Decimal;
  readonly aliases: readonly string[];
}

const u = (id: string, dimension: Dimension, factor: DecimalInput, aliases: string[], offset: DecimalInput = 0): UnitDef => ({
  id,
  dimension,
  factor: new Decimal(factor),
  offset: new Decimal(offset),
  aliases: [id, ...aliases],
});

// Factors are exact by definition. mmHg is defined as 13.5951 g/cm3 x 9.80665 m/s2 x 1 mm
// = 133.322387415 Pa exactly; the torr is 101325/760 Pa (133.322368421... Pa). They differ by
// about 1.4e-7 relative, so they are kept apart (convertunits.com "millimeter mercury").
const UNITS: readonly UnitDef[] = [
  u('°C', 'temperature', 1, ['degC', 'deg C', 'C', '° C', 'Celsius']),
  u('K', 'temperature', 1, ['kelvin'], '-273.15'),
  u('Pa', 'pressure', 1, ['pa']),
  u('hPa', 'pressure', 100, ['hpa']),
  u('kPa', 'pressure', 1000, ['kpa']),
  u('mbar', 'pressure', 100, ['mBar', 'millibar']),
  u('bar', 'pressure', 100000, []),
  u('mmHg', 'pressure', '133.322387415', ['mm Hg', 'mmhg']),
  u('Torr', 'pressure', new Decimal(101325).div(760), ['torr']),
  u('µL', 'volume', '0.001', ['uL', 'ul', 'µl', 'microlitre', 'microliter']),
  u('mL', 'volume', 1, ['ml', 'cm3', 'cm³']),
  u('L', 'volume', 1000, ['l', 'dm3', 'dm³']),
  u('mg', 'mass', '0.001', []),
  u('g', 'mass', 1, []),
  u('kg', 'mass', 1000, []),
  u('%', 'relativeHumidity', 1, ['%RH', '% RH', '%rh', 'RH%', '% r.h.', '%r.h.']),
];

const BY_ALIAS = new Map<string, UnitDef>();
for (const def of UNITS) for (const alias of def.aliases) BY_ALIAS.set(alias, def);

/** Unicode look-alikes people paste: Greek mu, the one-glyph Celsius sign, the ordinal º. */
function normaliseUnit(text: string): string {
  return text
    .trim()
    .replace(/\s+/g, ' ')
    .replace(/\u03bc/g, '\u00b5')
    .replace(/\u2103/g, '°C')
    .replace(/\u00ba/g, '°');
}

function lookup(unit: string, field: string): UnitDef {
  const def = BY_ALIAS.get(normaliseUnit(unit));
  if (!def) throw new MetrologyInputError(field, `has an unknown unit "${unit}"`);
  return def;
}

function requireDimension(def: UnitDef, dimension: Dimension, field: string): void {
  if (def.dimension !== dimension) {
    throw new MetrologyInputError(field, `has unit ${def.id}, a ${def.dimension} unit, where a ${dimension} is expected`);
  }
}

/** The dimension a unit belongs to (refuses unknown units). */
export function unitDimension(unit: string, field = 'unit'): Dimension {
  return lookup(unit, field).dimension;
}

/**
 * Converts a value between units of one dimension. Temperatures are absolute
 * (°C <-> K applies the 273.15 offset); to convert a temperature difference use
 * the same unit on both sides or multiply by 1.
 */
export function convert(value: DecimalInput, fromUnit: string, toUnit: string, field = 'value'): Decimal {
  const from = lookup(fromUnit, field);
  const to = lookup(toUnit, field);
  requireDimension(to, from.dimension, field);
  const v = dec(value, field);
  if (from === to) return v;
  return v.times(from.factor).plus(from.offset).minus(to.offset).div(to.factor);
}

/** A value and its unit, converted to the canonical unit of the expected dimension. */
export function toCanonical<D extends Dimension>(value: DecimalInput, unit: string, dimension: D, field = 'value'): Quantity<D> {
  const def = lookup(unit, field);
  requireDimension(def, dimension, field);
  const canonical = dec(value, field).times(def.factor).plus(def.offset);
  if (dimension === 'temperature' && canonical.lessThan(new Decimal('-273.15'))) {
    throw new MetrologyInputError(field, 'is below absolute zero', { min: '-273.15', unit: '°C' });
  }
  return { value: canonical, unit: CANONICAL_UNITS[dimension] };
}

// A number (point as decimal separator, optional exponent) followed by a unit.
const QUANTITY = /^\s*([+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?)\s*(\S.*?)\s*$/;

/**
 * Parses what a person typed, e.g. "1013.25 hPa", "20.5 °C", "250 µL", "45 %RH",
 * into the canonical unit of `dimension`. A unit is required. A decimal comma is
 * refused rather than guessed ("1,013" could mean 1013 or 1.013).
 */
export function parseQuantity<D extends Dimension>(text: string, dimension: D, field = 'value'): Quantity<D> {
  if (text.includes(',')) {
    throw new MetrologyInputError(field, 'uses a comma; write the decimal separator as a point and no thousands separator');
  }
  const match = QUANTITY.exec(text);
  if (!match || match[1] === undefined || match[2] === undefined) {
    throw new MetrologyInputError(field, `is not a number followed by a ${dimension} unit`);
  }
  return toCanonical(match[1], match[2], dimension, field);
}

/** The units accepted for a dimension (ids only, aliases omitted), for help texts. */
export function unitsOf(dimension: Dimension): string[] {
  return UNITS.filter((d) => d.dimension === dimension).map((d) => d.id);
}
