import { NestFactory } from '@nestjs/core';
import { FastifyAdapter, type NestFastifyApplication } from '@nestjs/platform-fastify';
import type { Database } from '@registry/data';
import type { FastifyInstance, FastifyReply, FastifyRequest } from 'fastify';
import type { Logger as PinoLogger } from 'pino';

import { AppModule } from './app.module';
import type { Clock } from './common/clock';
import { answerClientError } from './common/http/client-errors';
import { registerResponseHeaders } from './common/http/security-headers';
import { requestIdFor } from './common/http/request-id';
import { sendProblem } from './common/problem/problem.filter';
import { RequestLogController } from './common/http/request-logging';
import type { AppConfig } from './config/config.schema';
import { buildOpenApiDocument, mountDocs } from './docs/openapi';
import { applyIdempotencyKeys } from './idempotency/idempotency-routes';
import { registerCsvBody } from './inventory/csv-body';
import { PinoNestLogger } from './logging';
import { HttpMetrics } from './metrics/metrics';

export const SERVICE_VERSION = '0.1.0';

export interface CreateAppOptions {
  readonly config: AppConfig;
  readonly database: Database;
  readonly logger: PinoLogger;
  readonly clock?: Clock;
}

/**
 * Builds the HTTP application exactly as production runs it: the same adapter,
 * pipes, filter, hooks and docs. Tests use this too (then call `init()`).
 */
export async function createApp({ config, database, logger, clock }: CreateAppOptions): Promise<NestFastifyApplication> {
  const adapter = new FastifyAdapter({
    loggerInstance: logger,
    genReqId: requestIdFor,
    logController: new RequestLogController(),
    bodyLimit: config.http.bodyLimitBytes,
    trustProxy: config.http.trustProxy,
    forceCloseConnections: 'idle',
    return503OnClosing: true,
    // Errors raised before a route runs (a URL that is not valid percent-encoding, an over-long
    // path parameter, headers over the parser's limit) are problem details like every other.
    frameworkErrors: (error: Error, request: FastifyRequest, reply: FastifyReply) => sendProblem(error, request, reply),
    clientErrorHandler: answerClientError,
  });
  const metrics = new HttpMetrics(database.pool);
  const root = AppModule.register({ config, database, metrics, ...(clock ? { clock } : {}) });
  applyIdempotencyKeys(root);
  const app = await NestFactory.create<NestFastifyApplication>(root, adapter, {
    logger: new PinoNestLogger(logger),
    abortOnError: false,
  });
  const fastify = app.getHttpAdapter().getInstance() as unknown as FastifyInstance;
  registerResponseHeaders(fastify);
  registerCsvBody(fastify);
  metrics.register(fastify);
  if (config.http.corsOrigins.length > 0) {
    app.enableCors({ origin: config.http.corsOrigins, exposedHeaders: ['etag', 'x-request-id', 'location', 'retry-after'] });
  }
  mountDocs(app, buildOpenApiDocument(app, SERVICE_VERSION));
  return app;
}
