import { Decimal, MetrologyInputError } from '@registry/metrology';

import { applyRatio, atLiquidTemperature, interpolateCurve, nominalFallback } from './factor-correction';

// Invented figures (a 50 mL burette tested at 10, 25 and 50 mL); every expected value is worked by hand below.
const CURVE = [
  { nominalVolumeMl: '10', meanVolumeMl: '9.992', correctionMl: '-0.008', expandedUncertaintyMl: '0.010' },
  { nominalVolumeMl: '25', meanVolumeMl: '24.985', correctionMl: '-0.015', expandedUncertaintyMl: '0.014' },
  { nominalVolumeMl: '50', meanVolumeMl: '49.978', correctionMl: '-0.022', expandedUncertaintyMl: '0.020' },
];
const d = (v: string) => new Decimal(v);

describe('applying a factor', () => {
  it('one-mark ware: nominal × factor, only at the nominal volume', () => {
    // 25 × 0.9996 = 24.99; correction 24.99 − 25 = −0.01
    const r = applyRatio({ indicatedVolumeMl: d('25'), nominalVolumeMl: d('25'), factor: d('0.9996'), expandedUncertaintyMl: d('0.012') });
    expect(r.correctedVolumeMl.toFixed()).toBe('24.99');
    expect(r.correctionMl.toFixed()).toBe('-0.01');
    expect(r.expandedUncertaintyMl.toFixed()).toBe('0.012');
    expect(() =>
      applyRatio({ indicatedVolumeMl: d('20'), nominalVolumeMl: d('25'), factor: d('0.9996'), expandedUncertaintyMl: d('0.012') }),
    ).toThrow(MetrologyInputError);
  });

  it('curve: interpolates the correction linearly between the neighbouring points, with the larger U', () => {
    // x = 16 lies between 10 (c = −0.008) and 25 (c = −0.015):
    // c = −0.008 + (−0.015 + 0.008) × (16 − 10) / (25 − 10) = −0.008 − 0.007 × 0.4 = −0.0108; V = 16 − 0.0108 = 15.9892
    const r = interpolateCurve(CURVE, d('16'));
    expect(r.method).toBe('curve-interpolation');
    expect(r.correctionMl.toFixed()).toBe('-0.0108');
    expect(r.correctedVolumeMl.toFixed()).toBe('15.9892');
    expect(r.expandedUncertaintyMl.toFixed()).toBe('0.014');
    expect(r.between?.lower.nominalVolumeMl).toBe('10');
    expect(r.between?.upper.nominalVolumeMl).toBe('25');
  });

  it('curve: at a calibrated point, that point; at the ends, included', () => {
    expect(interpolateCurve(CURVE, d('25'))).toMatchObject({ method: 'curve-point' });
    expect(interpolateCurve(CURVE, d('25')).correctedVolumeMl.toFixed()).toBe('24.985');
    expect(interpolateCurve(CURVE, d('10')).correctedVolumeMl.toFixed()).toBe('9.992');
    expect(interpolateCurve(CURVE, d('50')).expandedUncertaintyMl.toFixed()).toBe('0.02');
  });

  it('curve: never extrapolates, and says the calibrated range', () => {
    for (const x of ['9.99', '50.01']) {
      try {
        interpolateCurve(CURVE, d(x));
        throw new Error('expected a refusal');
      } catch (e) {
        expect(e).toBeInstanceOf(MetrologyInputError);
        expect(e).toMatchObject({ field: 'indicatedVolumeMl', validRange: { min: '10', max: '50', unit: 'mL' } });
      }
    }
  });

  it('sorts the points before interpolating', () => {
    expect(interpolateCurve([...CURVE].reverse(), d('16')).correctedVolumeMl.toFixed()).toBe('15.9892');
  });

  it('glass at the liquid temperature: V_t = V20 × [1 + γ (t − 20)]', () => {
    // γ = 9.9e-6 /K, t = 25 °C: 1 + 9.9e-6 × 5 = 1.0000495; 15.9892 × 1.0000495 = 15.9892 + 0.0007914654 = 15.9899914654
    const r = atLiquidTemperature({
      volumeMl: d('15.9892'),
      expandedUncertaintyMl: d('0.014'),
      expansionCoefficientPerK: d('0.0000099'),
      liquidTemperatureC: d('25'),
      referenceTemperatureC: d('20'),
    });
    expect(r.expansionFactor.toFixed()).toBe('1.0000495');
    expect(r.volumeMl.toFixed()).toBe('15.9899914654');
    expect(r.expandedUncertaintyMl.toFixed()).toBe('0.014000693');
    expect(() => atLiquidTemperature({ ...baseT, liquidTemperatureC: d('51') })).toThrow(/between 0 and 50/);
  });

  it('nominal fallback: the indicated volume, the limit as U; one-mark ware still only at its nominal volume', () => {
    const r = nominalFallback({ indicatedVolumeMl: d('18.35'), nominalVolumeMl: d('50'), oneMark: false, limitMl: d('0.05') });
    expect(r.correctedVolumeMl.toFixed()).toBe('18.35');
    expect(r.expandedUncertaintyMl.toFixed()).toBe('0.05');
    expect(() => nominalFallback({ indicatedVolumeMl: d('20'), nominalVolumeMl: d('25'), oneMark: true, limitMl: d('0.03') })).toThrow(
      /nominal volume, 25 mL/,
    );
    expect(() => nominalFallback({ indicatedVolumeMl: d('51'), nominalVolumeMl: d('50'), oneMark: false, limitMl: d('0.05') })).toThrow(
      /must not exceed/,
    );
  });
});

const baseT = {
  volumeMl: d('25'),
  expandedUncertaintyMl: d('0.01'),
  expansionCoefficientPerK: d('0.0000099'),
  liquidTemperatureC: d('20'),
  referenceTemperatureC: d('20'),
};
