import fc from 'fast-check';

import { Decimal } from './decimal';
import { MetrologyInputError } from './errors';
import { tanakaAirFreeDensity, waterDensity } from './water-density';

const rho = (t: string | number, extra: { pressurePa?: string | number; airSaturated?: boolean } = {}) =>
  waterDensity({ temperatureC: t, ...extra }).densityKgPerM3;

describe('waterDensity (Tanaka et al. 2001)', () => {
  // Tanaka et al. (2001), recommended table at whole degrees, kg/m3, 4 decimals, as transcribed
  // in the public test suite ucnl/UCNLPhysics (PHX_Test.Water_density_calc_test, which cites the paper).
  // Tolerance 0.00005 kg/m3: half a unit in the table's last place.
  it.each([
    [0, '999.8428'],
    [4, '999.9749'],
    [10, '999.7027'],
    [15, '999.1026'],
    [20, '998.2067'],
    [25, '997.0470'],
    [30, '995.6488'],
    [35, '994.0326'],
    [40, '992.2152'],
  ])('matches the recommended table at %s °C', (t, expected) => {
    expect(rho(t).minus(expected).abs().toNumber()).toBeLessThanOrEqual(0.00005);
  });

  // warsa.de "Water properties" tutorial: print(pure_water_density(20)) -> 998.2067455596167 for the
  // same formula and constants evaluated in binary64. Tolerance 1e-9 kg/m3 covers the binary64 rounding
  // (about 1e-13 relative); it pins the constants a1..a5 as coded here to full precision.
  it('reproduces an independent evaluation of the formula at 20 °C to 1e-9 kg/m3', () => {
    expect(rho(20).minus('998.2067455596167').abs().toNumber()).toBeLessThan(1e-9);
  });

  // The formula has its maximum a5 = 999.974950 kg/m3 at t = -a1 = 3.983035 °C (paper's constants).
  it('peaks at a5 exactly at t = -a1', () => {
    expect(rho('3.983035').toString()).toBe('999.97495');
    expect(rho('3.9').lessThan(rho('3.983035'))).toBe(true);
    expect(rho('4.1').lessThan(rho('3.983035'))).toBe(true);
  });

  // Air saturation: delta = s0 + s1 t, s0 = -4.612e-3 kg/m3, s1 = 0.106e-3 kg/(m3 °C) (constants as
  // quoted from the paper on metgen.pagesperso-orange.fr); at 20 °C delta = -2.492e-3 kg/m3 exactly.
  it('applies the air-saturation correction', () => {
    const r = waterDensity({ temperatureC: 20, airSaturated: true });
    expect(r.terms.airSaturationCorrectionKgPerM3.toString()).toBe('-0.002492');
    expect(r.densityKgPerM3.minus(rho(20)).toString()).toBe('-0.002492');
    expect(r.warnings).toEqual([]);
  });

  it('warns when the air-saturation correction is used above 25 °C', () => {
    const r = waterDensity({ temperatureC: 30, airSaturated: true });
    expect(r.warnings.map((w) => w.code)).toEqual(['air-saturation-extrapolated']);
  });

  // Compressibility: kappa(t) = k0 + k1 t + k2 t^2 gives 5.074e-10 /Pa at 0 °C and 4.790e-10 /Pa at
  // 10 °C. Handbook of Chemistry and Physics values quoted on convert-me.com (forum thread t=992):
  // 5.04e-10 /Pa at 0 °C and 4.78e-10 /Pa at 10 °C. Tolerance 1 %: the handbook values are older
  // measurements given to 3 digits; agreement to 1 % shows the sign and scale of k0..k2 are right.
  it.each([
    [0, 5.04e-10],
    [10, 4.78e-10],
  ])('uses a compressibility consistent with handbook values at %s °C', (t, kappa) => {
    const dp = 100000;
    const r = waterDensity({ temperatureC: t, pressurePa: 101325 + dp });
    const ours = r.terms.compressibilityFactor.minus(1).div(dp).toNumber();
    expect(Math.abs(ours / kappa - 1)).toBeLessThan(0.01);
    expect(r.densityKgPerM3.greaterThan(rho(t))).toBe(true);
  });

  it('leaves the density unchanged at exactly 101 325 Pa', () => {
    expect(rho(20, { pressurePa: 101325 }).equals(rho(20))).toBe(true);
  });

  it('refuses temperatures outside 0-40 °C, naming the valid range', () => {
    for (const t of ['-0.01', '40.01']) {
      try {
        waterDensity({ temperatureC: t });
        throw new Error('expected a refusal');
      } catch (e) {
        expect(e).toBeInstanceOf(MetrologyInputError);
        expect((e as MetrologyInputError).validRange).toEqual({ min: '0', max: '40', unit: '°C' });
      }
    }
    expect(() => waterDensity({ temperatureC: 20, pressurePa: 0 })).toThrow(MetrologyInputError);
    expect(() => waterDensity({ temperatureC: Number.NaN })).toThrow(MetrologyInputError);
  });

  it('warns within 0.5 °C of a validity limit and not inside', () => {
    expect(waterDensity({ temperatureC: '0.3' }).warnings.map((w) => w.code)).toEqual(['near-validity-limit']);
    expect(waterDensity({ temperatureC: '39.8' }).warnings.map((w) => w.code)).toEqual(['near-validity-limit']);
    expect(waterDensity({ temperatureC: '0' }).warnings).toHaveLength(1);
    expect(waterDensity({ temperatureC: '20' }).warnings).toEqual([]);
  });

  // Property: above the maximum (3.983035 °C) density falls strictly as temperature rises.
  it('falls with temperature above 4 °C', () => {
    fc.assert(
      fc.property(fc.double({ min: 4, max: 40, noNaN: true }), fc.double({ min: 4, max: 40, noNaN: true }), (a, b) => {
        fc.pre(a !== b);
        const [lo, hi] = a < b ? [a, b] : [b, a];
        return tanakaAirFreeDensity(new Decimal(hi)).lessThan(tanakaAirFreeDensity(new Decimal(lo)));
      }),
    );
  });
});
