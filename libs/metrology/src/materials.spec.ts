import { Decimal } from './decimal';
import { MetrologyInputError } from './errors';
import { VESSEL_MATERIALS, findMaterial, resolveExpansionCoefficient } from './materials';

describe('vessel materials', () => {
  // Borosilicate glass 3.3: mean linear expansion 3.3e-6 /K (DIN 52328, printed in a laboratory-glass
  // maker's data sheet, huayuanglass.com); cubic gamma = 3 alpha = 9.9e-6 /K.
  it('gives borosilicate 3.3 three times its linear coefficient', () => {
    expect(new Decimal(findMaterial('borosilicate-3-3')!.expansionCoefficientPerK).equals(new Decimal('3.3e-6').times(3))).toBe(true);
  });

  // Soda-lime glass: linear 9.1e-6 /K (a laboratory-glass maker's FAQ comparing it with borosilicate 3.3);
  // the table rounds 3 x 9.1e-6 = 27.3e-6 to 27e-6. Tolerance 0.5e-6 /K: that rounding.
  it('gives soda-lime glass about three times its published linear coefficient', () => {
    const gamma = new Decimal(findMaterial('soda-lime')!.expansionCoefficientPerK);
    expect(gamma.minus(new Decimal('9.1e-6').times(3)).abs().toNumber()).toBeLessThanOrEqual(0.5e-6);
  });

  it('has kebab-case ids, a positive coefficient and a stated source on every row', () => {
    const ids = new Set<string>();
    for (const m of VESSEL_MATERIALS) {
      expect(m.id).toMatch(/^[a-z0-9]+(-[a-z0-9]+)*$/);
      expect(ids.has(m.id)).toBe(false);
      ids.add(m.id);
      expect(new Decimal(m.expansionCoefficientPerK).greaterThan(0)).toBe(true);
      expect(m.source.length).toBeGreaterThan(20);
    }
  });
});

describe('resolveExpansionCoefficient', () => {
  it('takes the table value for a material, or an entered value', () => {
    expect(resolveExpansionCoefficient({ material: 'borosilicate-3-3' })).toMatchObject({ materialId: 'borosilicate-3-3' });
    const entered = resolveExpansionCoefficient({ expansionCoefficientPerK: '1.2e-5' });
    expect(entered.expansionCoefficientPerK.toString()).toBe('0.000012');
    expect(entered.source).toBe('entered value');
  });

  it('refuses both, neither, an unknown material and an implausible value', () => {
    expect(() => resolveExpansionCoefficient({})).toThrow(/exactly one/);
    expect(() => resolveExpansionCoefficient({ material: 'soda-lime', expansionCoefficientPerK: '27e-6' })).toThrow(/exactly one/);
    expect(() => resolveExpansionCoefficient({ material: 'unobtainium' })).toThrow(/unknown/);
    expect(() => resolveExpansionCoefficient({ expansionCoefficientPerK: '-1e-6' })).toThrow(MetrologyInputError);
    // Probably a linear coefficient typed in ppm (e.g. 9.9 meaning 9.9e-6): refused, not used.
    expect(() => resolveExpansionCoefficient({ expansionCoefficientPerK: '9.9' })).toThrow(MetrologyInputError);
  });
});
