// The part of autocannon's programmatic API the benchmarks use (autocannon 8 ships no types).
declare module 'autocannon' {
  namespace autocannon {
    interface RequestParams {
      method?: string;
      path?: string;
      headers?: Record<string, string>;
      body?: string;
    }
    interface Request extends RequestParams {
      setupRequest?: (request: RequestParams, context: Record<string, unknown>) => RequestParams;
    }
    interface Options {
      url: string;
      connections?: number;
      duration?: number;
      pipelining?: number;
      headers?: Record<string, string>;
      requests?: Request[];
      timeout?: number;
    }
    interface Histogram {
      average: number;
      mean: number;
      stddev: number;
      min: number;
      max: number;
      total: number;
      p50: number;
      p90: number;
      p99: number;
      p99_9: number;
    }
    interface Result {
      requests: Histogram & { sent: number };
      latency: Histogram;
      throughput: Histogram;
      errors: number;
      timeouts: number;
      non2xx: number;
      resets: number;
      duration: number;
      '2xx': number;
      statusCodeStats: Record<string, { count: number }>;
    }
  }
  function autocannon(options: autocannon.Options): Promise<autocannon.Result>;
  export = autocannon;
}
