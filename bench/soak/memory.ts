import { memoryOf } from '../support/factors-load';

/** One reading of a memory figure (RSS, or the JavaScript heap in use), MB. */
export interface RssSample {
  /** Seconds since sampling began. */
  readonly t: number;
  readonly mb: number;
}

export interface RssTrend {
  readonly samples: number;
  readonly startMb: number;
  readonly endMb: number;
  readonly peakMb: number;
  /**
   * The trend, MB per minute: least-squares slope, over the second half of the run, of the lowest
   * RSS in each `floorWindowS` window (the level after each major collection); NaN for fewer than three windows.
   */
  readonly slopeMbPerMin: number;
  /** The same fit over every sample of the second half: dominated by where the run cut the GC sawtooth. */
  readonly rawSlopeMbPerMin: number;
  readonly floorWindowS: number;
  /** [window start s, lowest RSS MB] of the second half. */
  readonly floors: [number, number][];
  /** Seconds the slope was fitted over. */
  readonly fittedOverS: number;
}

/** Samples a process's resident set size every `everyMs` (1 s) until stopped. */
export function sampleRss(pid: number | undefined, everyMs = 1000) {
  const samples: RssSample[] = [];
  const t0 = performance.now();
  const take = () => {
    const m = memoryOf(pid);
    if (m && Number.isFinite(m.rssMb)) samples.push({ t: (performance.now() - t0) / 1000, mb: m.rssMb });
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

/**
 * Samples the JavaScript heap in use (`nodejs_heap_size_used_bytes` of the service's /metrics)
 * every `everyMs`: beside the RSS, it tells a leak of JavaScript objects (the heap's floor rises
 * too) from V8 or the allocator keeping more pages (only the RSS's does).
 */
export function sampleHeap(metricsUrl: string, everyMs = 1000) {
  const samples: RssSample[] = [];
  const t0 = performance.now();
  let busy = false;
  const take = async () => {
    if (busy) return;
    busy = true;
    try {
      const text = await (await fetch(metricsUrl, { signal: AbortSignal.timeout(5000) })).text();
      const bytes = Number(/^nodejs_heap_size_used_bytes (\S+)$/m.exec(text)?.[1]);
      if (Number.isFinite(bytes)) samples.push({ t: (performance.now() - t0) / 1000, mb: bytes / 2 ** 20 });
    } catch {
      // a reading missed under load: the next one counts
    } finally {
      busy = false;
    }
  };
  void take();
  const timer = setInterval(() => void take(), everyMs);
  return {
    samples,
    stop: (): RssSample[] => {
      clearInterval(timer);
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
 *
 * Under load the service's RSS is a sawtooth: V8 fills its young and old space by tens of MB in
 * seconds and a major collection gives it back (measured here: about 80 MB up and down every
 * 10–15 s at 64 clients as fast as answered, up to 36 s apart at 116 requests a second). A straight line through every sample depends on where the run
 * happened to stop in that cycle (for a regular 80 MB, 13 s sawtooth over 150 s it moves by about
 * 1.6 MB/min with the stopping phase; see tests/reliability/soak-memory.spec.ts). What a leak
 * raises is the floor, the RSS right after a collection: so the trend is fitted to the lowest
 * sample of each whole `floorWindowS` window (40 s: longer than the longest cycle seen, so each
 * window holds a collection), and the all-samples slope is reported beside it. A run needs three
 * whole windows in its second half (about 250 s) for a trend.
 */
export function rssTrend(samples: readonly RssSample[], floorWindowS = 40): RssTrend {
  if (samples.length === 0) {
    return {
      samples: 0,
      startMb: NaN,
      endMb: NaN,
      peakMb: NaN,
      slopeMbPerMin: NaN,
      rawSlopeMbPerMin: NaN,
      floorWindowS,
      floors: [],
      fittedOverS: 0,
    };
  }
  const half = samples.slice(Math.floor(samples.length / 2));
  const from = (half[0] as RssSample).t;
  const floors = new Map<number, number>();
  for (const s of half) {
    const w = Math.floor((s.t - from) / floorWindowS);
    floors.set(w, Math.min(floors.get(w) ?? Infinity, s.mb));
  }
  // Only whole windows: a last, shorter one may hold no collection, and its lowest sample no floor.
  const whole = Math.floor(((half.at(-1) as RssSample).t - from + 1e-9) / floorWindowS);
  const windows = [...floors.entries()].filter(([w]) => w < whole).map(([w, mb]) => ({ x: from + w * floorWindowS, y: mb }));
  return {
    samples: samples.length,
    startMb: (samples[0] as RssSample).mb,
    endMb: (samples.at(-1) as RssSample).mb,
    peakMb: Math.max(...samples.map((s) => s.mb)),
    // Fewer than three floors make no trend (a run under about two minutes): NaN, reported as not measured.
    slopeMbPerMin: windows.length >= 3 ? leastSquaresSlope(windows) * 60 : NaN,
    rawSlopeMbPerMin: leastSquaresSlope(half.map((s) => ({ x: s.t, y: s.mb }))) * 60,
    floorWindowS,
    floors: windows.map((p) => [p.x, p.y]),
    fittedOverS: half.length > 1 ? (half.at(-1) as RssSample).t - from : 0,
  };
}
