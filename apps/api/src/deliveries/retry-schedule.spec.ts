import { RETRY_JITTER, retryDelayMs } from './retry-schedule';

describe('retry schedule', () => {
  const base = 60_000;
  const max = 6 * 3_600_000;

  it('doubles the delay after each failure, without jitter at random 0', () => {
    expect([1, 2, 3, 4, 5].map((n) => retryDelayMs(n, base, max, 0))).toEqual([60_000, 120_000, 240_000, 480_000, 960_000]);
  });

  it('takes at most 20 % off at random', () => {
    expect(RETRY_JITTER).toBe(0.2);
    expect(retryDelayMs(3, base, max, 0.5)).toBe(216_000);
    expect(retryDelayMs(3, base, max, 0.999_999)).toBeGreaterThanOrEqual(192_000);
  });

  it('never waits longer than the cap, however many failures', () => {
    expect(retryDelayMs(9, base, max, 0)).toBe(15_360_000);
    expect(retryDelayMs(10, base, max, 0)).toBe(max);
    expect(retryDelayMs(1_000, base, max, 0)).toBe(max);
  });
});
