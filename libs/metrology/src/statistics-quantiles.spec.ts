import fc from 'fast-check';

import { Decimal } from './decimal';
import { MetrologyInputError } from './errors';
import { normalQuantile, studentTQuantile, studentTTwoSided } from './statistics-quantiles';

const close = (actual: Decimal, expected: string | number, tol: number): void => {
  expect(actual.minus(expected).abs().toNumber()).toBeLessThanOrEqual(tol);
};

describe('Student t quantiles against the NIST/SEMATECH e-Handbook table', () => {
  // NIST/SEMATECH e-Handbook of Statistical Methods, 1.3.6.7.2 "Critical values of
  // the Student's t distribution" (upper-tail probability α, three decimals), as
  // reproduced at pdfcoffee.com/student-t-distribution-table-pdf-free.html.
  it.each([
    [0.975, 1, '12.706'],
    [0.975, 2, '4.303'],
    [0.975, 9, '2.262'],
    [0.975, 10, '2.228'],
    [0.975, 30, '2.042'],
    [0.975, 60, '2.000'],
    [0.975, 100, '1.984'],
    [0.95, 9, '1.833'],
    [0.995, 9, '3.250'],
    [0.999, 30, '3.385'],
    [0.999, 10, '4.143'], // table truncates: exact 4.14370…
  ])('t(%s, ν = %s) = %s', (p, nu, expected) => {
    close(studentTQuantile(p, nu), expected, 0.001);
  });

  it('gives the normal quantile for ν = Infinity (table row ∞: 1.960, 2.576, 3.090)', () => {
    close(studentTQuantile(0.975, Infinity), '1.960', 0.0005);
    close(studentTQuantile(0.995, 'Infinity'), '2.576', 0.0005);
    close(studentTQuantile(0.999, Infinity), '3.090', 0.0005);
  });

  it('matches the closed forms for ν = 1 (Cauchy: tan π(p − ½)) and ν = 2 ((2p − 1)·√(2 / (4p(1 − p))))', () => {
    // Exact identities of the t distribution with 1 and 2 degrees of freedom.
    // Note: the NIST table prints 318.313 for ν = 1, α = 0.001; the exact value is tan(0.499π) = 318.3088…
    for (const p of [0.6, 0.9, 0.975, 0.999]) {
      close(studentTQuantile(p, 1), Math.tan(Math.PI * (p - 0.5)), 1e-9 * Math.tan(Math.PI * (p - 0.5)));
      close(studentTQuantile(p, 2), (2 * p - 1) * Math.sqrt(2 / (4 * p * (1 - p))), 1e-10);
    }
  });

  it('is odd about p = ½', () => {
    expect(studentTQuantile(0.5, 7).isZero()).toBe(true);
    expect(studentTQuantile(0.025, 9).neg().equals(studentTQuantile(0.975, 9))).toBe(true);
  });

  it('accepts non-integer ν (Welch–Satterthwaite) and lies between the neighbouring integers', () => {
    const t45 = studentTQuantile(0.975, '4.5');
    expect(t45.lessThan(studentTQuantile(0.975, 4))).toBe(true);
    expect(t45.greaterThan(studentTQuantile(0.975, 5))).toBe(true);
  });

  it('joins the large-ν expansion smoothly at ν = 10 000', () => {
    const below = studentTQuantile(0.975, 9999.999).toNumber();
    const above = studentTQuantile(0.975, 10000).toNumber();
    expect(Math.abs(below - above)).toBeLessThan(1e-10);
  });

  it('gives the two-sided coverage factor: k(95 %, ν = 9) = 2.262', () => {
    close(studentTTwoSided(0.95, 9), '2.262', 0.0005);
  });

  it('refuses ν < 1, p outside (0, 1) and a non-numeric ν', () => {
    expect(() => studentTQuantile(0.975, 0.5)).toThrow(MetrologyInputError);
    expect(() => studentTQuantile(1, 5)).toThrow(MetrologyInputError);
    expect(() => studentTQuantile(0, 5)).toThrow(MetrologyInputError);
    expect(() => studentTQuantile(0.9, 'many')).toThrow(MetrologyInputError);
    expect(() => studentTTwoSided(1.2, 5)).toThrow(MetrologyInputError);
  });

  it('property: decreases as ν grows and never falls below the normal quantile', () => {
    fc.assert(
      fc.property(
        fc.double({ min: 1, max: 1e6, noNaN: true }),
        fc.double({ min: 1, max: 1e6, noNaN: true }),
        fc.double({ min: 0.55, max: 0.9999, noNaN: true }),
        (a, b, p) => {
          const [lo, hi] = a < b ? [a, b] : [b, a];
          const tLo = studentTQuantile(p, lo);
          const tHi = studentTQuantile(p, hi);
          return tLo.greaterThanOrEqualTo(tHi.minus(1e-10)) && tHi.greaterThanOrEqualTo(normalQuantile(p).minus(1e-10));
        },
      ),
      { numRuns: 200 },
    );
  });
});

describe('normal quantile', () => {
  it('matches tabulated values', () => {
    // Φ⁻¹(0.975) = 1.959963984540054 (Abramowitz & Stegun 26.2; from memory to 15 digits);
    // Φ⁻¹(0.95) = 1.644853626951 and Φ⁻¹(0.995) = 2.575829303549 (same source, from memory).
    close(normalQuantile(0.975), '1.959963984540054', 1e-11);
    close(normalQuantile(0.95), '1.644853626951', 1e-11);
    close(normalQuantile(0.995), '2.575829303549', 1e-11);
    close(normalQuantile(0.025), '-1.959963984540054', 1e-11);
    // Φ(1) = 0.841344746068543 (A&S 26.2 table, from memory), so Φ⁻¹ of it is 1.
    close(normalQuantile('0.841344746068543'), 1, 1e-11);
  });

  it('property: is odd and increasing', () => {
    fc.assert(
      fc.property(fc.double({ min: 1e-9, max: 0.4999, noNaN: true }), fc.double({ min: 1e-9, max: 0.4999, noNaN: true }), (p, r) => {
        const sym = normalQuantile(p)
          .plus(normalQuantile(new Decimal(1).minus(p)))
          .abs()
          .lessThan(1e-10);
        const mono = p < r ? normalQuantile(p).lessThanOrEqualTo(normalQuantile(r)) : true;
        return sym && mono;
      }),
    );
  });
});
