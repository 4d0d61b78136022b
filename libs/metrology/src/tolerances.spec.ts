import fc from 'fast-check';

import { Decimal } from './decimal';
import { MetrologyInputError } from './errors';
import { listToleranceTables, lookupTolerance, verdict, type ToleranceQuery } from './tolerances';

const limit = (q: ToleranceQuery): string | undefined => lookupTolerance(q)?.limitMl.toString();

describe('lookupTolerance: values checked against published copies', () => {
  it('ISO 1042 class A flasks (German Eichordnung Anlage 12, 3.2: 10 mL 0.025, 100 mL 0.10, 250 mL 0.15, 1000 mL 0.4)', () => {
    expect(limit({ kind: 'volumetric-flask', accuracyClass: 'A', nominalVolumeMl: 10 })).toBe('0.025');
    expect(limit({ kind: 'volumetric-flask', accuracyClass: 'A', nominalVolumeMl: '100.0' })).toBe('0.1');
    expect(limit({ kind: 'volumetric-flask', accuracyClass: 'A', nominalVolumeMl: 250 })).toBe('0.15');
    const l = lookupTolerance({ kind: 'volumetric-flask', accuracyClass: 'A', nominalVolumeMl: 1000 });
    expect(l).toMatchObject({ source: 'ISO 1042:1998', tableId: 'iso-1042-1998', verification: 'checked' });
    expect(l?.limitMl.equals('0.4')).toBe(true);
  });

  it('marks the ISO 1042 class B column as from memory', () => {
    expect(lookupTolerance({ kind: 'volumetric-flask', accuracyClass: 'B', nominalVolumeMl: 100 })?.verification).toBe('from-memory');
  });

  it('ASTM E288 class A flasks (socratic.org table: 100 mL 0.080, 250 mL 0.12, 1000 mL 0.30) and class B = 2 × A (E288 1.1.2)', () => {
    expect(limit({ kind: 'volumetric-flask', accuracyClass: 'A', nominalVolumeMl: 100, standard: 'ASTM' })).toBe('0.08');
    expect(limit({ kind: 'volumetric-flask', accuracyClass: 'A', nominalVolumeMl: 250, standard: 'ASTM' })).toBe('0.12');
    expect(limit({ kind: 'volumetric-flask', accuracyClass: 'A', nominalVolumeMl: 1000, standard: 'ASTM E288' })).toBe('0.3');
    expect(limit({ kind: 'volumetric-flask', accuracyClass: 'B', nominalVolumeMl: 100, standard: 'ASTM' })).toBe('0.16');
  });

  it('ASTM E969 transfer pipets (Thompson, Illustrated Guide to Home Chemistry Experiments, Table 3-1: 10 mL A 0.02 / B 0.04, 25 mL A 0.03)', () => {
    expect(limit({ kind: 'one-mark-pipette', accuracyClass: 'A', nominalVolumeMl: 10, standard: 'ASTM' })).toBe('0.02');
    expect(limit({ kind: 'one-mark-pipette', accuracyClass: 'B', nominalVolumeMl: 10, standard: 'ASTM' })).toBe('0.04');
    expect(limit({ kind: 'one-mark-pipette', accuracyClass: 'A', nominalVolumeMl: 25, standard: 'ASTM' })).toBe('0.03');
  });

  it('ASTM E1272 cylinders (E1272-02(2012) Table 1: 25 mL A 0.17 / B 0.34, 100 mL A 0.50)', () => {
    expect(limit({ kind: 'graduated-cylinder', accuracyClass: 'A', nominalVolumeMl: 25, standard: 'ASTM' })).toBe('0.17');
    expect(limit({ kind: 'graduated-cylinder', accuracyClass: 'B', nominalVolumeMl: 25, standard: 'ASTM' })).toBe('0.34');
    expect(limit({ kind: 'graduated-cylinder', accuracyClass: 'A', nominalVolumeMl: 100, standard: 'ASTM' })).toBe('0.5');
  });

  it('ISO 385 50 mL burette (niito.kz: class A ±0.05 mL, class B ±0.10 mL); AS shares the class A limit', () => {
    expect(limit({ kind: 'burette', accuracyClass: 'A', nominalVolumeMl: 50 })).toBe('0.05');
    expect(limit({ kind: 'burette', accuracyClass: 'AS', nominalVolumeMl: 50 })).toBe('0.05');
    expect(limit({ kind: 'burette', accuracyClass: 'B', nominalVolumeMl: 50 })).toBe('0.1');
    expect(lookupTolerance({ kind: 'burette', accuracyClass: 'A', nominalVolumeMl: 25 })?.verification).toBe('from-memory');
  });

  it('ISO 8655-2 1000 µL piston pipette (TSI Journals 2019, Table 2: ±8 µL systematic, 3 µL random), fixed or variable', () => {
    for (const kind of ['piston-pipette-fixed', 'piston-pipette-variable'] as const) {
      const l = lookupTolerance({ kind, accuracyClass: 'none', nominalVolumeMl: 1 });
      expect(l?.limitMl.equals('0.008')).toBe(true);
      expect(l?.randomLimitMl?.equals('0.003')).toBe(true);
      expect(l?.verification).toBe('checked');
    }
    expect(lookupTolerance({ kind: 'piston-pipette-fixed', accuracyClass: 'none', nominalVolumeMl: '0.01' })?.limitMl.toString()).toBe(
      '0.00012',
    );
  });

  it('USP <31> graduated pipets (USP 29 text: 10, 20, 30 µL for 2, 5, 10 mL)', () => {
    expect(limit({ kind: 'graduated-pipette', accuracyClass: 'A', nominalVolumeMl: 5, standard: 'USP' })).toBe('0.02');
    expect(limit({ kind: 'graduated-pipette', accuracyClass: 'A', nominalVolumeMl: 10, standard: 'USP' })).toBe('0.03');
  });
});

describe('lookupTolerance: no limit known', () => {
  it('returns null for kind other, a class the standard lacks, and sizes not in the table', () => {
    expect(lookupTolerance({ kind: 'other', accuracyClass: 'A', nominalVolumeMl: 10 })).toBeNull();
    expect(lookupTolerance({ kind: 'volumetric-flask', accuracyClass: 'AS', nominalVolumeMl: 100 })).toBeNull();
    expect(lookupTolerance({ kind: 'volumetric-flask', accuracyClass: 'none', nominalVolumeMl: 100 })).toBeNull();
    expect(lookupTolerance({ kind: 'piston-pipette-fixed', accuracyClass: 'A', nominalVolumeMl: 1 })).toBeNull();
    expect(lookupTolerance({ kind: 'volumetric-flask', accuracyClass: 'A', nominalVolumeMl: 150 })).toBeNull();
    expect(lookupTolerance({ kind: 'graduated-cylinder', accuracyClass: 'A', nominalVolumeMl: 1000, standard: 'ASTM' })).toBeNull();
    expect(lookupTolerance({ kind: 'burette', accuracyClass: 'A', nominalVolumeMl: 50, standard: 'USP' })).toBeNull();
  });

  it('refuses a non-positive volume, an unknown kind, class or standard', () => {
    expect(() => lookupTolerance({ kind: 'burette', accuracyClass: 'A', nominalVolumeMl: 0 })).toThrow(MetrologyInputError);
    expect(() => lookupTolerance({ kind: 'beaker' as never, accuracyClass: 'A', nominalVolumeMl: 1 })).toThrow(/kind/);
    expect(() => lookupTolerance({ kind: 'burette', accuracyClass: 'C' as never, nominalVolumeMl: 1 })).toThrow(/accuracyClass/);
    expect(() => lookupTolerance({ kind: 'burette', accuracyClass: 'A', nominalVolumeMl: 50, standard: 'DIN' })).toThrow(/standard/);
  });

  it('property: never interpolates — a limit exists only for a tabulated size', () => {
    const sizes = new Set(listToleranceTables().flatMap((t) => t.rows.map((r) => new Decimal(r.nominalMl).toString())));
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 10_000_000 }),
        fc.constantFrom(
          'volumetric-flask',
          'one-mark-pipette',
          'graduated-pipette',
          'burette',
          'graduated-cylinder',
          'piston-pipette-fixed',
        ),
        fc.constantFrom('A', 'AS', 'B', 'none'),
        fc.constantFrom('ISO', 'ASTM', 'USP'),
        (thousandths, kind, cls, standard) => {
          const v = new Decimal(thousandths).div(1000);
          const l = lookupTolerance({ kind: kind as never, accuracyClass: cls as never, nominalVolumeMl: v, standard });
          return l === null || sizes.has(v.toString());
        },
      ),
    );
  });
});

describe('listToleranceTables', () => {
  it('names the source of every table and gives independent copies', () => {
    const tables = listToleranceTables();
    expect(tables.length).toBeGreaterThanOrEqual(11);
    for (const t of tables) {
      expect(t.standard).toMatch(/ISO|ASTM|USP/);
      expect(t.table.length).toBeGreaterThan(0);
      for (const r of t.rows) for (const cls of Object.keys(r.limitMl)) expect(t.classes).toContain(cls);
    }
    (tables[0]?.rows[0]?.limitMl as Record<string, string>)['A'] = '999';
    expect(listToleranceTables()[0]?.rows[0]?.limitMl.A).not.toBe('999');
  });
});

describe('verdict', () => {
  it('passes at the limit (inclusive) and fails beyond it', () => {
    expect(verdict({ errorMl: '-0.025', limitMl: '0.025' }).verdict).toBe('pass');
    const fail = verdict({ errorMl: '0.026', limitMl: '0.025' });
    expect(fail.verdict).toBe('fail');
    expect(fail.limitSource).toBe('table');
    expect(fail.reasons[0]).toMatch(/exceeds/);
  });

  it('judges both errors of a piston pipette (ISO 8655-2 1000 µL limits: 0.008 / 0.003 mL)', () => {
    expect(verdict({ errorMl: '0.005', limitMl: '0.008', randomErrorMl: '0.002', randomLimitMl: '0.003' }).verdict).toBe('pass');
    const r = verdict({ errorMl: '0.005', limitMl: '0.008', randomErrorMl: '0.004', randomLimitMl: '0.003' });
    expect(r.verdict).toBe('fail');
    expect(r.reasons.some((x) => x.startsWith('Random error'))).toBe(true);
    expect(() => verdict({ errorMl: '0.005', limitMl: '0.008', randomLimitMl: '0.003' })).toThrow(/randomErrorMl/);
  });

  it('says no-limit when no limit is known', () => {
    const r = verdict({ errorMl: '0.1', limitMl: null });
    expect(r).toMatchObject({ verdict: 'no-limit', limitSource: 'none', limitMl: null });
  });

  it('lets a laboratory limit with a reason win over the table', () => {
    const r = verdict({ errorMl: '0.03', limitMl: '0.025', labOverride: { limitMl: '0.05', reason: 'Teaching lab acceptance limit' } });
    expect(r).toMatchObject({ verdict: 'pass', limitSource: 'lab-override', overrideReason: 'Teaching lab acceptance limit' });
    expect(verdict({ errorMl: '0.03', limitMl: null, labOverride: { limitMl: '0.02', reason: 'Tighter in-house limit' } }).verdict).toBe(
      'fail',
    );
    expect(() => verdict({ errorMl: '0.03', limitMl: '0.025', labOverride: { limitMl: '0.05', reason: '  ' } })).toThrow(/reason/);
    expect(() => verdict({ errorMl: '0.03', limitMl: '0' })).toThrow(MetrologyInputError);
  });
});
