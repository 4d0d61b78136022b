import fc from 'fast-check';

import { eccentricityCheck, sensitivityCheck, usp41Accuracy, usp41Repeatability } from './balance';
import { Decimal } from './decimal';
import { MetrologyInputError } from './errors';

const tenOf = (...values: string[]): string[] => Array.from({ length: 10 }, (_, i) => values[i % values.length] as string);

describe('USP <41> repeatability and minimum weight', () => {
  it('passes a 100 g weight with s = 0.105 mg and gives the minimum weight 2000·s (hand-worked)', () => {
    // Hand-worked: five readings 99.9999 g and five 100.0001 g; Σd² = 10 · (0.0001 g)²,
    // s = √(1e-7 / 9) = 1.05409255e-4 g; 2·s/m = 2.108e-4 %; minimum weight 0.2108185 g.
    const r = usp41Repeatability({ readingsG: tenOf('99.9999', '100.0001'), testWeightG: 100, readabilityG: '0.0001' });
    expect(r.n).toBe(10);
    expect(r.standardDeviationG.toSignificantDigits(9).toString()).toBe('0.000105409255');
    expect(r.floorApplied).toBe(false);
    expect(r.relativeRepeatabilityPercent.toSignificantDigits(4).toString()).toBe('0.0002108');
    expect(r.minimumWeightG.toSignificantDigits(7).toString()).toBe('0.2108185');
    expect(r.pass).toBe(true);
  });

  it('replaces s below 0.41 d by 0.41 d, so the minimum weight is 820 d', () => {
    // USP <41>: "when s < 0.41 d, use 0.41 d"; Sartorius' summary of the 2013 revision
    // gives the lowest starting point of the operating range as 820 d.
    const r = usp41Repeatability({ readingsG: tenOf('100.0000'), testWeightG: 100, readabilityG: '0.0001' });
    expect(r.standardDeviationG.isZero()).toBe(true);
    expect(r.floorApplied).toBe(true);
    expect(r.sUsedG.equals('0.000041')).toBe(true);
    expect(r.minimumWeightG.equals('0.082')).toBe(true);
    expect(r.minimumWeightG.div('0.0001').equals(820)).toBe(true);
  });

  it('matches the worked minimum weights of a USP <41> summary (s 0.02 mg → 40 mg, 0.03 mg → 60 mg, 0.2 mg → 400 mg)', () => {
    // "USP Balances (Repeatability, Minimum Weight, Accuracy)", scribd.com/document/274748068:
    // minimum weight = 2000 × repeatability (s.d.), with the example table quoted here.
    // Readings alternate m ± a; with ten values s = a·√(10/9), so a = s·√0.9.
    for (const [sMg, minMg] of [
      ['0.02', '40'],
      ['0.03', '60'],
      ['0.2', '400'],
    ] as const) {
      const a = new Decimal(sMg).div(1000).times(new Decimal('0.9').sqrt());
      const readings = tenOf(new Decimal(50).minus(a).toString(), new Decimal(50).plus(a).toString());
      const r = usp41Repeatability({ readingsG: readings, testWeightG: 50, readabilityG: '0.00001' });
      expect(r.minimumWeightG.times(1000).toDecimalPlaces(6).toString()).toBe(minMg);
    }
  });

  it('judges against the smallest net weight when given (USP <41> as revised in 2014)', () => {
    const r = usp41Repeatability({
      readingsG: tenOf('99.9999', '100.0001'),
      testWeightG: 100,
      readabilityG: '0.0001',
      smallestNetWeightG: '0.1',
    });
    expect(r.relativeTo).toBe('smallest-net-weight');
    expect(r.relativeRepeatabilityPercent.toSignificantDigits(4).toString()).toBe('0.2108');
    expect(r.pass).toBe(false);
  });

  it('refuses fewer than 10 replicates and a non-positive readability', () => {
    const nine = tenOf('1.0000').slice(0, 9);
    expect(() => usp41Repeatability({ readingsG: nine, testWeightG: 1, readabilityG: '0.0001' })).toThrow(/at least 10/);
    expect(() => usp41Repeatability({ readingsG: tenOf('1'), testWeightG: 1, readabilityG: 0 })).toThrow(MetrologyInputError);
    expect(() => usp41Repeatability({ readingsG: tenOf('1'), testWeightG: 1, readabilityG: '-0.1' })).toThrow(/readabilityG/);
  });

  it('property: minimum weight ≥ 820 d, and pass exactly when the minimum weight ≤ the reference mass', () => {
    fc.assert(
      fc.property(
        fc.array(fc.integer({ min: -50, max: 50 }), { minLength: 10, maxLength: 30 }),
        fc.constantFrom('0.1', '0.01', '0.001', '0.0001', '0.00001'),
        fc.integer({ min: 1, max: 5000 }),
        (offsets, d, mass) => {
          const readings = offsets.map((o) => new Decimal(mass).plus(new Decimal(o).times(d)));
          const r = usp41Repeatability({ readingsG: readings, testWeightG: mass, readabilityG: d });
          return r.minimumWeightG.greaterThanOrEqualTo(new Decimal(d).times(820)) && r.pass === r.minimumWeightG.lessThanOrEqualTo(mass);
        },
      ),
    );
  });
});

describe('USP <41> accuracy', () => {
  it('passes a reading within 0.10 % and fails one beyond (hand-worked on a 100 g weight)', () => {
    const ok = usp41Accuracy({ readingG: '100.08', testWeightG: 100, capacityG: 220 });
    expect(ok.deviationPercent.equals('0.08')).toBe(true);
    expect(ok.limitG.equals('0.1')).toBe(true);
    expect(ok.pass).toBe(true);
    expect(usp41Accuracy({ readingG: '100.10', testWeightG: 100 }).pass).toBe(true);
    expect(usp41Accuracy({ readingG: '99.89', testWeightG: 100 }).pass).toBe(false);
  });

  it('refuses a test weight outside 5 %–100 % of capacity and an unsuitable weight MPE', () => {
    expect(() => usp41Accuracy({ readingG: 5, testWeightG: 5, capacityG: 220 })).toThrow(/5 % and 100 %/);
    expect(() => usp41Accuracy({ readingG: 250, testWeightG: 250, capacityG: 220 })).toThrow(MetrologyInputError);
    expect(() => usp41Accuracy({ readingG: 11, testWeightG: 11, capacityG: 220 })).not.toThrow();
    // USP <41>: MPE (or calibration uncertainty) of the weight ≤ 1/3 of the test limit.
    expect(() => usp41Accuracy({ readingG: 100, testWeightG: 100, testWeightMpeG: '0.05' })).toThrow(/one third/);
  });
});

describe('sensitivity and eccentricity (laboratory limits)', () => {
  it('compares a reading with a reference weight', () => {
    const r = sensitivityCheck({ readingG: '200.0003', referenceWeightG: '200.0000', limitG: '0.0005' });
    expect(r.deviationG.equals('0.0003')).toBe(true);
    expect(r.deviationPercent.equals('0.00015')).toBe(true);
    expect(r.pass).toBe(true);
    expect(sensitivityCheck({ readingG: '199.9990', referenceWeightG: 200, limitG: '0.0005' }).pass).toBe(false);
    expect(() => sensitivityCheck({ readingG: 1, referenceWeightG: 1, limitG: 0 })).toThrow(MetrologyInputError);
  });

  it('reports the largest off-centre deviation and its position', () => {
    const r = eccentricityCheck({
      centreReadingG: '100.0000',
      offCentreReadingsG: ['100.0002', '99.9996', '100.0001', '100.0000'],
      limitG: '0.0003',
    });
    expect(r.maxDeviationIndex).toBe(1);
    expect(r.maxDeviationG.equals('0.0004')).toBe(true);
    expect(r.pass).toBe(false);
    expect(() => eccentricityCheck({ centreReadingG: 1, offCentreReadingsG: [], limitG: 1 })).toThrow(MetrologyInputError);
  });
});
