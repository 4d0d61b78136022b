import { type FastifyReply, type FastifyRequest, LogController } from 'fastify';

/**
 * One log line per request (on completion) instead of two, with the fields an
 * operator filters on. Liveness probes and metric scrapes are not logged.
 */
export class RequestLogController extends LogController {
  constructor() {
    super({
      requestIdLogLabel: 'requestId',
      disableRequestLogging: (req: FastifyRequest) => req.url === '/health/live' || req.url === '/metrics',
    });
  }

  override incomingRequest(request: FastifyRequest): void {
    // The path only: a query string may carry a secret (a calendar feed's token is in its URL).
    if (!this.isLogDisabled(request)) request.log.debug({ method: request.method, path: request.url.split('?')[0] }, 'request received');
  }

  override requestCompleted(error: Error | null | undefined, request: FastifyRequest, reply: FastifyReply): void {
    if (this.isLogDisabled(request)) return;
    const fields = {
      method: request.method,
      route: request.routeOptions.url ?? 'unmatched',
      path: request.url.split('?')[0],
      status: reply.statusCode,
      ms: Math.round(reply.elapsedTime * 100) / 100,
    };
    if (error) reply.log.error({ ...fields, err: error }, 'request failed');
    else reply.log.info(fields, 'request completed');
  }
}
