import type { FastifyInstance } from 'fastify';
import type { Pool } from 'pg';
import { collectDefaultMetrics, Counter, Gauge, Histogram, Registry } from 'prom-client';

/** Prometheus metrics of one service instance. */
export class HttpMetrics {
  readonly registry = new Registry();
  private readonly requests = new Counter({
    name: 'http_requests_total',
    help: 'HTTP requests by method, route template and status',
    labelNames: ['method', 'route', 'status'] as const,
    registers: [this.registry],
  });
  private readonly duration = new Histogram({
    name: 'http_request_duration_seconds',
    help: 'HTTP request duration by method, route template and status',
    labelNames: ['method', 'route', 'status'] as const,
    buckets: [0.001, 0.0025, 0.005, 0.01, 0.025, 0.05, 0.1, 0.25, 0.5, 1, 2.5, 5],
    registers: [this.registry],
  });
  private readonly schedulerPasses = new Histogram({
    name: 'scheduler_pass_duration_seconds',
    help: 'Due-date scheduler passes over every lab, by outcome',
    labelNames: ['outcome'] as const,
    buckets: [0.05, 0.1, 0.25, 0.5, 1, 2, 5, 10, 30, 60, 120],
    registers: [this.registry],
  });
  private readonly noticesRaised = new Counter({
    name: 'scheduler_notices_raised_total',
    help: 'Due notices raised by this instance',
    registers: [this.registry],
  });

  constructor(pool: Pool) {
    collectDefaultMetrics({ register: this.registry });
    const gauge = (name: string, help: string, read: () => number): void => {
      new Gauge({
        name,
        help,
        registers: [this.registry],
        collect() {
          this.set(read());
        },
      });
    };
    gauge('db_pool_connections_total', 'Connections open in the database pool', () => pool.totalCount);
    gauge('db_pool_connections_idle', 'Idle connections in the database pool', () => pool.idleCount);
    gauge('db_pool_requests_waiting', 'Queries waiting for a pooled connection', () => pool.waitingCount);
  }

  /** One scheduler pass: its duration and the notices it raised. */
  observeSchedulerPass(seconds: number, outcome: 'ok' | 'failed', raised: number): void {
    this.schedulerPasses.observe({ outcome }, seconds);
    this.noticesRaised.inc(raised);
  }

  /** Times every request; labels use the route template, never the raw URL. */
  register(fastify: FastifyInstance): void {
    fastify.addHook('onResponse', async (request, reply) => {
      const route = request.routeOptions.url ?? 'unmatched';
      const labels = { method: request.method, route, status: String(reply.statusCode) };
      this.requests.inc(labels);
      this.duration.observe(labels, reply.elapsedTime / 1000);
    });
  }
}
