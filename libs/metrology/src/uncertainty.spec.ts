import { Decimal } from './decimal';
import { MetrologyInputError } from './errors';
import {
  type BudgetInput,
  buildBudget,
  coverageFactor,
  INFINITE_DOF,
  rectangularStandardUncertainty,
  triangularStandardUncertainty,
  welchSatterthwaite,
} from './uncertainty';

const d = (v: string | number) => new Decimal(v);

describe('GUM annex H.1: end-gauge calibration (JCGM 100:2008 H.1.3–H.1.6)', () => {
  // Inputs of H.1.3 (lengths in nm): value, standard uncertainty, degrees of freedom.
  const inputs: BudgetInput[] = [
    {
      quantity: 'Length of the standard',
      symbol: 'ls',
      unit: 'nm',
      value: '50000623',
      standardUncertainty: 25,
      distribution: 'normal',
      degreesOfFreedom: 18,
    },
    {
      quantity: 'Measured difference',
      symbol: 'd',
      unit: 'nm',
      value: '215',
      standardUncertainty: '9.7',
      distribution: 'type-a',
      degreesOfFreedom: '25.6',
    },
    {
      quantity: 'Expansion coefficient of the standard',
      symbol: 'alphaS',
      unit: '1/°C',
      value: '11.5e-6',
      standardUncertainty: '1.2e-6',
      distribution: 'rectangular',
    },
    {
      quantity: 'Deviation of the bed from 20 °C',
      symbol: 'theta',
      unit: '°C',
      value: '-0.1',
      standardUncertainty: '0.41',
      distribution: 'normal',
    },
    {
      quantity: 'Difference of expansion coefficients',
      symbol: 'dAlpha',
      unit: '1/°C',
      value: '0',
      standardUncertainty: '0.58e-6',
      distribution: 'rectangular',
      degreesOfFreedom: 50,
    },
    {
      quantity: 'Difference of temperatures',
      symbol: 'dTheta',
      unit: '°C',
      value: '0',
      standardUncertainty: '0.029',
      distribution: 'rectangular',
      degreesOfFreedom: 2,
    },
  ];
  // l = ls + d − ls·(δα·θ + αs·δθ)   (H.1.2, equation H.3 linearised)
  const model = (x: Readonly<Record<string, Decimal>>) => {
    const { ls, d: diff, alphaS, theta, dAlpha, dTheta } = x as Record<string, Decimal>;
    return ls!.plus(diff!).minus(ls!.times(dAlpha!.times(theta!).plus(alphaS!.times(dTheta!))));
  };
  const budget = buildBudget(inputs, { model, coverage: { probability: '0.99' } });

  it('gives l = 50 000 838 nm (H.1.5)', () => {
    expect(budget.estimate?.toNumber()).toBeCloseTo(50000838, 6);
  });

  it('finds the Table H.1 contributions 25, 9.7, 0, 0, 2.9, 16.6 nm by central differences', () => {
    const c = budget.rows.map((r) => r.contribution.toNumber());
    expect(c[0]).toBeCloseTo(25, 6);
    expect(c[1]).toBeCloseTo(9.7, 6);
    expect(c[2]).toBe(0);
    expect(c[3]).toBe(0);
    expect(c[4]).toBeCloseTo(2.9, 2); // c = −ls·θ = 5.0e6 nm·°C, times u(δα) = 0.58e-6 /°C
    expect(c[5]).toBeCloseTo(16.675, 2); // Table H.1 prints 16.6
  });

  it('combines to u_c = 32 nm with ν_eff = 16 (H.1.4, H.1.6)', () => {
    expect(budget.combinedStandardUncertainty.toNumber()).toBeCloseTo(31.71, 2);
    expect(budget.effectiveDegreesOfFreedom.toNumber()).toBeCloseTo(16.66, 1);
    const shares = budget.rows.reduce((s, r) => s.plus(r.share), d(0));
    expect(shares.toNumber()).toBeCloseTo(1, 12);
  });

  it('states U99 = t99(16)·u_c = 2.92 × 32 nm = 93 nm (H.1.6)', () => {
    expect(budget.coverageFactor.toString()).toBe('2.92');
    expect(budget.expandedUncertainty.toDecimalPlaces(0).toNumber()).toBe(93);
    expect(budget.coverageRule).toContain('ν = 16');
  });
});

describe('coverage factor (JCGM 100 Table G.2)', () => {
  // Table G.2 values, checked against a reproduction of the table.
  it.each([
    ['0.95', 1, '12.71'],
    ['0.95', 2, '4.3'],
    ['0.9545', 2, '4.53'],
    ['0.95', 10, '2.23'],
    ['0.95', 20, '2.09'],
    ['0.99', 1, '63.66'],
    ['0.9973', 5, '5.51'],
  ])('p = %s, ν = %d → k = %s', (p, nu, k) => {
    expect(coverageFactor(d(nu), { probability: p, conventionalKFromDof: null }).k.toString()).toBe(k);
  });

  it('uses the normal limit for ν = ∞: 1.96 at 95 %, 2.00 at 95.45 %, 3.00 at 99.73 %', () => {
    expect(coverageFactor(INFINITE_DOF, { conventionalKFromDof: null }).k.toString()).toBe('1.96');
    expect(coverageFactor(INFINITE_DOF, { probability: '0.9545' }).k.toString()).toBe('2');
    expect(coverageFactor(INFINITE_DOF, { probability: '0.9973' }).k.toString()).toBe('3');
  });

  it('states the conventional k = 2 at 95 % once ν_eff ≥ 50, t below', () => {
    expect(coverageFactor(d(50)).k.toString()).toBe('2');
    expect(coverageFactor(INFINITE_DOF).k.toString()).toBe('2');
    expect(coverageFactor(d('49.9')).k.toString()).toBe('2.01'); // t95(49) = 2.0096
    expect(coverageFactor(d(50), { conventionalKFromDof: null }).k.toString()).toBe('2.01'); // Table G.2: 2.01
  });

  it('truncates ν_eff to the next lower integer (G.4.1)', () => {
    expect(coverageFactor(d('10.9'), { conventionalKFromDof: null }).k.toString()).toBe('2.23');
  });
});

describe('additive model Y = X1+X2+X3+X4, u(x_i) = 1 (JCGM 101:2008 9.2.2)', () => {
  const inputs: BudgetInput[] = [1, 2, 3, 4].map((i) => ({
    quantity: `X${i}`,
    symbol: `x${i}`,
    unit: '1',
    value: 0,
    standardUncertainty: 1,
    distribution: 'normal' as const,
    sensitivityCoefficient: 1,
  }));

  it('gives u(y) = 2 and the GUF interval ±3.92 with the pure t rule (Table 2)', () => {
    const b = buildBudget(inputs, { coverage: { conventionalKFromDof: null } });
    expect(b.combinedStandardUncertainty.toNumber()).toBe(2);
    expect(b.effectiveDegreesOfFreedom.isFinite()).toBe(false);
    expect(b.expandedUncertainty.toNumber()).toBeCloseTo(3.92, 10);
    expect(b.estimate).toBeNull();
  });

  it('gives ν_eff = 40 for four equal contributions of 10 degrees of freedom each (G.4.1)', () => {
    const nu = welchSatterthwaite([1, 2, 3, 4].map(() => ({ contribution: d(1), degreesOfFreedom: d(10) })));
    expect(nu.toNumber()).toBeCloseTo(40, 20);
  });
});

describe('input handling', () => {
  it('converts half-widths: a/√3 rectangular, a/√6 triangular (JCGM 100 4.3.7, 4.3.9)', () => {
    expect(rectangularStandardUncertainty('0.5').toNumber()).toBeCloseTo(0.288675134595, 12);
    expect(triangularStandardUncertainty(1).toNumber()).toBeCloseTo(0.408248290464, 12);
  });

  it('refuses a Type A component without degrees of freedom', () => {
    const row: BudgetInput = {
      quantity: 'q',
      symbol: 'q',
      unit: 'g',
      value: 1,
      standardUncertainty: 1,
      distribution: 'type-a',
      sensitivityCoefficient: 1,
    };
    expect(() => buildBudget([row])).toThrow(MetrologyInputError);
  });

  it('refuses a component without sensitivity coefficient when no model is given', () => {
    const row: BudgetInput = { quantity: 'q', symbol: 'q', unit: 'g', value: 1, standardUncertainty: 1, distribution: 'normal' };
    expect(() => buildBudget([row])).toThrow(/sensitivityCoefficient/);
  });

  it('refuses a negative standard uncertainty and a duplicate symbol', () => {
    const row: BudgetInput = {
      quantity: 'q',
      symbol: 'q',
      unit: 'g',
      value: 1,
      standardUncertainty: -1,
      distribution: 'normal',
      sensitivityCoefficient: 1,
    };
    expect(() => buildBudget([row])).toThrow(/negative/);
    expect(() =>
      buildBudget([
        { ...row, standardUncertainty: 1 },
        { ...row, standardUncertainty: 1 },
      ]),
    ).toThrow(/twice/);
  });
});
