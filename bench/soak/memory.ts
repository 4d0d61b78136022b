import { memoryOf } from '../support/factors-load';

export interface RssSample {
  /** Seconds since sampling began. */
  readonly t: number;
  readonly rssMb: number;
}

export interface RssTrend {
  readonly samples: number;
  readonly startMb: number;
  readonly endMb: number;
  readonly peakMb: number;
  /** Least-squares slope over the second half of the samples, MB per minute. */
  readonly slopeMbPerMin: number;
  /** Seconds the slope was fitted over. */
  readonly fittedOverS: number;
}

/** Samples a process's resident set size every `everyMs` (1 s) until stopped. */
export function sampleRss(pid: number | undefined, everyMs = 1000) {
  const samples: RssSample[] = [];
  const t0 = performance.now();
  const take = () => {
    const m = memoryOf(pid);
    if (m && Number.isFinite(m.rssMb)) samples.push({ t: (performance.now() - t0) / 1000, rssMb: m.rssMb });
  };
  take();
  const timer = setInterval(take, everyMs);
  return {
    samples,
    stop: (): RssSample[] => {
      clearInterval(timer);
      take();
      return samples;
    },
  };
}

/** Ordinary least squares slope of y on x; 0 for fewer than two distinct x. */
export function leastSquaresSlope(points: readonly { x: number; y: number }[]): number {
  const n = points.length;
  if (n < 2) return 0;
  const mx = points.reduce((s, p) => s + p.x, 0) / n;
  const my = points.reduce((s, p) => s + p.y, 0) / n;
  let sxy = 0;
  let sxx = 0;
  for (const p of points) {
    sxy += (p.x - mx) * (p.y - my);
    sxx += (p.x - mx) ** 2;
  }
  return sxx === 0 ? 0 : sxy / sxx;
}

/**
 * Start, end and peak RSS, and the trend over the second half of the run: the first half holds
 * the warm-up (code compiled, caches and connection pools filled, the heap grown to its working
 * size), which is growth but not a leak.
 */
export function rssTrend(samples: readonly RssSample[]): RssTrend {
  if (samples.length === 0) return { samples: 0, startMb: NaN, endMb: NaN, peakMb: NaN, slopeMbPerMin: NaN, fittedOverS: 0 };
  const half = samples.slice(Math.floor(samples.length / 2));
  const slopePerS = leastSquaresSlope(half.map((s) => ({ x: s.t, y: s.rssMb })));
  return {
    samples: samples.length,
    startMb: (samples[0] as RssSample).rssMb,
    endMb: (samples.at(-1) as RssSample).rssMb,
    peakMb: Math.max(...samples.map((s) => s.rssMb)),
    slopeMbPerMin: slopePerS * 60,
    fittedOverS: half.length > 1 ? (half.at(-1) as RssSample).t - (half[0] as RssSample).t : 0,
  };
}
