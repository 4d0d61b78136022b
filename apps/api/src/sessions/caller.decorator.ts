import { createParamDecorator, type ExecutionContext } from '@nestjs/common';
import type { FastifyRequest } from 'fastify';

/** The facts about an anonymous caller that sign-in records (no actor yet). */
export interface Caller {
  readonly requestId: string;
  readonly clientAddress: string;
  readonly userAgent: string | null;
}

export const CallerInfo = createParamDecorator((_data: unknown, host: ExecutionContext): Caller => {
  const request = host.switchToHttp().getRequest<FastifyRequest>();
  const agent = request.headers['user-agent'];
  return { requestId: String(request.id), clientAddress: request.ip, userAgent: typeof agent === 'string' ? agent.slice(0, 500) : null };
});
