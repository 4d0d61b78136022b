import { type ArgumentsHost, Catch, type ExceptionFilter } from '@nestjs/common';
import type { FastifyReply, FastifyRequest } from 'fastify';

import { toProblem } from './to-problem';

export const PROBLEM_CONTENT_TYPE = 'application/problem+json; charset=utf-8';

/** Sends a problem for any error. Used by the Nest filter and by Fastify's own handlers. */
export function sendProblem(error: unknown, request: FastifyRequest, reply: FastifyReply): void {
  const { problem, headers, unexpected } = toProblem(error, { url: request.url, requestId: String(request.id) });
  if (unexpected) {
    request.log.error({ err: error }, 'unexpected error');
  } else if (problem.status >= 500) {
    request.log.warn({ problem: problem.code, reason: (error as Error)?.message }, 'dependency unavailable');
  }
  if (reply.sent) return;
  reply.status(problem.status).headers(headers).header('content-type', PROBLEM_CONTENT_TYPE).send(JSON.stringify(problem));
}

/** The single Nest exception filter: every error leaves as RFC 9457 problem details. */
@Catch()
export class ProblemFilter implements ExceptionFilter {
  catch(error: unknown, host: ArgumentsHost): void {
    const http = host.switchToHttp();
    sendProblem(error, http.getRequest<FastifyRequest>(), http.getResponse<FastifyReply>());
  }
}
