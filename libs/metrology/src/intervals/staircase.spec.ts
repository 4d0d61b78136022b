import fc from 'fast-check';

import { MetrologyInputError } from '../errors';
import { staircaseStep, type StaircaseRule, validateStaircaseRule } from './staircase';

// ILAC-G24:2007 / OIML D 10:2007, 6.2 (method 1, "staircase"; section number from memory):
// lengthen after results within tolerance, shorten after one outside. Step sizes are ours (see staircase.ts).
const rule: StaircaseRule = { minIntervalDays: 90, maxIntervalDays: 730, maxStepDays: 60, lengthenAfterPasses: 3 };

describe('staircase interval (ILAC-G24 / OIML D 10, method 1)', () => {
  it('counts passes and lengthens by a quarter after the third in a row, then starts the run again', () => {
    const one = staircaseStep(rule, { intervalDays: 180, passesInRow: 0 }, 'in-tolerance');
    expect(one).toMatchObject({ intervalDays: 180, passesInRow: 1, change: 'unchanged' });
    const two = staircaseStep(rule, one, 'in-tolerance');
    const three = staircaseStep(rule, two, 'in-tolerance');
    // 180 d + 45 d (a quarter of 180, below the 60 d step limit).
    expect(three).toMatchObject({ intervalDays: 225, passesInRow: 0, change: 'lengthened' });
  });

  it('limits a lengthening step to the maximum step and the maximum interval', () => {
    // A quarter of 365 d is 92 d; the step limit is 60 d.
    expect(staircaseStep(rule, { intervalDays: 365, passesInRow: 2 }, 'in-tolerance').intervalDays).toBe(425);
    // 700 d + 60 d would pass the 730 d maximum.
    expect(staircaseStep(rule, { intervalDays: 700, passesInRow: 2 }, 'in-tolerance').intervalDays).toBe(730);
    expect(staircaseStep(rule, { intervalDays: 730, passesInRow: 2 }, 'in-tolerance')).toMatchObject({
      intervalDays: 730,
      change: 'unchanged',
    });
  });

  it('shortens by half after an out-of-tolerance result, within the step and the minimum, and ends the run', () => {
    // Half of 100 d is 50 d (below the 60 d step), but the minimum is 90 d.
    expect(staircaseStep(rule, { intervalDays: 100, passesInRow: 2 }, 'out-of-tolerance')).toMatchObject({
      intervalDays: 90,
      passesInRow: 0,
      change: 'shortened',
    });
    // Half of 365 d is 183 d; the step limit is 60 d.
    expect(staircaseStep(rule, { intervalDays: 365, passesInRow: 0 }, 'out-of-tolerance').intervalDays).toBe(305);
  });

  it('never lengthens an interval on an out-of-tolerance result, even one below the minimum', () => {
    expect(staircaseStep(rule, { intervalDays: 30, passesInRow: 1 }, 'out-of-tolerance')).toMatchObject({
      intervalDays: 30,
      change: 'unchanged',
    });
    fc.assert(
      fc.property(
        fc.integer({ min: 1, max: 3660 }),
        fc.integer({ min: 1, max: 3660 }),
        fc.integer({ min: 1, max: 400 }),
        fc.integer({ min: 1, max: 20 }),
        fc.integer({ min: 1, max: 3660 }),
        fc.nat(30),
        (a, b, maxStepDays, lengthenAfterPasses, intervalDays, passesInRow) => {
          const r = { minIntervalDays: Math.min(a, b), maxIntervalDays: Math.max(a, b), maxStepDays, lengthenAfterPasses };
          const failed = staircaseStep(r, { intervalDays, passesInRow }, 'out-of-tolerance');
          const passed = staircaseStep(r, { intervalDays, passesInRow }, 'in-tolerance');
          expect(failed.intervalDays).toBeLessThanOrEqual(intervalDays);
          expect(intervalDays - failed.intervalDays).toBeLessThanOrEqual(maxStepDays);
          expect(passed.intervalDays).toBeGreaterThanOrEqual(intervalDays);
          expect(passed.intervalDays - intervalDays).toBeLessThanOrEqual(maxStepDays);
        },
      ),
    );
  });

  it('refuses an inconsistent rule, naming the field', () => {
    expect(() => validateStaircaseRule({ ...rule, maxIntervalDays: 60 })).toThrow(MetrologyInputError);
    expect(() => validateStaircaseRule({ ...rule, maxStepDays: 0 })).toThrow(/maxStepDays/);
    expect(() => validateStaircaseRule({ ...rule, lengthenAfterPasses: 0 })).toThrow(/lengthenAfterPasses/);
    expect(() => staircaseStep(rule, { intervalDays: 1.5, passesInRow: 0 }, 'in-tolerance')).toThrow(/intervalDays/);
  });
});
