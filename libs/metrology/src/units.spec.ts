import fc from 'fast-check';

import { Decimal } from './decimal';
import { MetrologyInputError } from './errors';
import { convert, parseQuantity, toCanonical, unitDimension, unitsOf } from './units';

describe('parseQuantity', () => {
  it('reads pressures in the units people type and returns pascals', () => {
    expect(parseQuantity('1013.25 hPa', 'pressure')).toEqual({ value: new Decimal('101325'), unit: 'Pa' });
    expect(parseQuantity('1013.25 mbar', 'pressure').value.toString()).toBe('101325');
    expect(parseQuantity('101.325kPa', 'pressure').value.toString()).toBe('101325');
    // 1 mmHg = 13.5951 g/cm3 x 9.80665 m/s2 x 1 mm = 133.322387415 Pa exactly
    // (convertunits.com, "millimeter mercury": "by definition is 133.322387415 Pa").
    expect(parseQuantity('760 mmHg', 'pressure').value.toString()).toBe('101325.0144354');
    // 1 Torr = 101325/760 Pa (same source), so 760 Torr is one standard atmosphere.
    expect(parseQuantity('760 Torr', 'pressure').value.toDecimalPlaces(20).toString()).toBe('101325');
  });

  it('reads temperatures in °C, degC, C, ℃ and K and returns °C', () => {
    for (const text of ['20.5 °C', '20.5°C', '20.5 degC', '20.5 C', '20.5 ℃', '20.5 ºC', '293.65 K']) {
      expect(parseQuantity(text, 'temperature')).toEqual({ value: new Decimal('20.5'), unit: '°C' });
    }
    expect(parseQuantity('-5 °C', 'temperature').value.toString()).toBe('-5');
  });

  it('reads volumes in µL (micro sign, Greek mu or u), mL and L and returns mL', () => {
    for (const text of ['250 µL', '250 μL', '250 uL', '250 ul', '0.25 mL', '0.00025 L']) {
      expect(parseQuantity(text, 'volume').value.toString()).toBe('0.25');
    }
  });

  it('reads masses in mg, g and kg and returns g; humidity in %RH returns %', () => {
    expect(parseQuantity('1500 mg', 'mass').value.toString()).toBe('1.5');
    expect(parseQuantity('0.0015 kg', 'mass').value.toString()).toBe('1.5');
    expect(parseQuantity('45 %RH', 'relativeHumidity')).toEqual({ value: new Decimal(45), unit: '%' });
    expect(parseQuantity('45 %', 'relativeHumidity').value.toString()).toBe('45');
  });

  it('refuses an unknown unit, a unit of another dimension, a missing unit and a decimal comma', () => {
    expect(() => parseQuantity('20 furlongs', 'volume')).toThrow(MetrologyInputError);
    expect(() => parseQuantity('20 hPa', 'temperature')).toThrow(/pressure unit/);
    expect(() => parseQuantity('20', 'temperature')).toThrow(MetrologyInputError);
    expect(() => parseQuantity('1,5 mL', 'volume')).toThrow(/comma/);
    expect(() => parseQuantity('abc mL', 'volume')).toThrow(MetrologyInputError);
  });

  it('refuses a temperature below absolute zero', () => {
    expect(() => parseQuantity('-1 K', 'temperature')).toThrow(/absolute zero/);
    expect(() => toCanonical('-273.16', '°C', 'temperature')).toThrow(MetrologyInputError);
  });
});

describe('convert', () => {
  it('converts between units of one dimension', () => {
    expect(convert('20', '°C', 'K').toString()).toBe('293.15');
    expect(convert('1', 'L', 'µL').toString()).toBe('1000000');
    expect(convert('1013.25', 'hPa', 'kPa').toString()).toBe('101.325');
    expect(convert('1', 'kg', 'mg').toString()).toBe('1000000');
  });

  it('refuses a conversion across dimensions and unknown units', () => {
    expect(() => convert('1', 'g', 'mL')).toThrow(MetrologyInputError);
    expect(() => convert('1', 'stone', 'g')).toThrow(/unknown unit/);
    expect(unitDimension('hPa')).toBe('pressure');
    expect(unitsOf('volume')).toEqual(['µL', 'mL', 'L']);
  });

  // Property: a value converted to another unit of its dimension and back is unchanged.
  // Tolerance: 34 significant digits are carried; 101325/760 is not a finite decimal, so
  // allow 1e-28 relative (six orders above the 1e-34 working precision, far below any reading).
  it('round-trips every pair of units of a dimension', () => {
    const dims = ['temperature', 'pressure', 'volume', 'mass', 'relativeHumidity'] as const;
    const pairs = dims.flatMap((d) => unitsOf(d).flatMap((a) => unitsOf(d).map((b) => [a, b] as const)));
    fc.assert(
      fc.property(fc.constantFrom(...pairs), fc.double({ min: -1e6, max: 1e6, noNaN: true }), ([a, b], x) => {
        const back = convert(convert(x, a, b), b, a);
        const tol = new Decimal(x).abs().plus(1).times('1e-28');
        return back.minus(x).abs().lessThanOrEqualTo(tol);
      }),
    );
  });
});
