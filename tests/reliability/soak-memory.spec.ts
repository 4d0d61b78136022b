import { leastSquaresSlope, type RssSample, rssTrend } from '../../bench/soak/memory';

/**
 * The soak's memory trend (bench/soak/memory.ts) on synthetic RSS series shaped like the
 * service's under load: a GC sawtooth of 80 MB every 13 s on a floor that is flat, or that
 * rises by a set amount a minute. The floor fit finds the rise; the all-samples fit swings
 * with the phase at which the run stops.
 */
const sawtooth = (seconds: number, floorMbPerMin: number, periodS = 13, amplitudeMb = 80, phaseS = 0): RssSample[] =>
  Array.from({ length: seconds + 1 }, (_, t) => ({
    t,
    mb: 300 + (floorMbPerMin * t) / 60 + (amplitudeMb * ((t + phaseS) % periodS)) / periodS,
  }));

describe('soak memory trend', () => {
  it('fits a straight line exactly', () => {
    expect(leastSquaresSlope([0, 1, 2, 3].map((x) => ({ x, y: 5 + 2 * x })))).toBeCloseTo(2, 12);
    expect(leastSquaresSlope([{ x: 1, y: 3 }])).toBe(0);
  });

  it('reads a steady sawtooth as flat, whatever the phase at which the run stops', () => {
    for (let phase = 0; phase < 13; phase++) {
      const trend = rssTrend(sawtooth(300, 0, 13, 80, phase));
      expect(Math.abs(trend.slopeMbPerMin)).toBeLessThan(0.5);
    }
    // The all-samples fit over the same series swings by over 1 MB a minute with the phase.
    const raw = Array.from({ length: 13 }, (_, phase) => rssTrend(sawtooth(300, 0, 13, 80, phase)).rawSlopeMbPerMin);
    expect(Math.max(...raw) - Math.min(...raw)).toBeGreaterThan(1);
  });

  it('finds a floor that rises 3 MB a minute under the same sawtooth, and reports start, end and peak', () => {
    const samples = sawtooth(300, 3);
    const trend = rssTrend(samples);
    expect(trend.slopeMbPerMin).toBeGreaterThan(2.5);
    expect(trend.slopeMbPerMin).toBeLessThan(3.5);
    expect(trend).toMatchObject({ samples: 301, startMb: samples[0]!.mb, endMb: samples.at(-1)!.mb, fittedOverS: 150 });
    expect(trend.peakMb).toBe(Math.max(...samples.map((s) => s.mb)));
    expect(trend.floors.length).toBe(3);
  });

  it('gives no trend for a run too short to hold three whole windows in its second half', () => {
    expect(rssTrend(sawtooth(100, 50)).slopeMbPerMin).toBeNaN();
    expect(rssTrend([]).samples).toBe(0);
  });
});
