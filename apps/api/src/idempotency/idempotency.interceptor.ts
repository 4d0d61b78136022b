import { type CallHandler, type ExecutionContext, Injectable, type NestInterceptor } from '@nestjs/common';
import { HTTP_CODE_METADATA } from '@nestjs/common/constants';
import type { FastifyReply } from 'fastify';
import { from, lastValueFrom, type Observable } from 'rxjs';

import type { ContextualRequest } from '../auth/auth.decorators';
import { DomainError } from '../common/problem/domain-error';
import { exemptionOf } from './idempotency-exemption';
import { IDEMPOTENCY_HEADER, parseIdempotencyKey, requestFingerprint } from './idempotency-key';
import type { RecordedResponse } from './idempotency.repository';
import { type Answered, IdempotencyService, type KeyedOutcome } from './idempotency.service';

/** Response headers a replay repeats. */
const REPLAYED_HEADERS = ['etag', 'location'] as const;

/**
 * `Idempotency-Key` on a write route. `applyIdempotencyKeys` binds it to every POST, PUT,
 * PATCH and DELETE route, first in the route's list, so it is outermost and sees the
 * answer as it is sent: serialised, with ETag and Location set. Without the header it
 * only passes the request on; with it, {@link IdempotencyService} runs the request.
 */
@Injectable()
export class IdempotencyInterceptor implements NestInterceptor {
  constructor(private readonly idempotency: IdempotencyService) {}

  intercept(context: ExecutionContext, next: CallHandler): Observable<unknown> {
    const request = context.switchToHttp().getRequest<ContextualRequest>();
    const header = request.headers['idempotency-key'];
    if (header === undefined) return next.handle();
    const exemption = exemptionOf(context.getHandler());
    if (exemption) {
      throw new DomainError('validation-failed', `This route does not take ${IDEMPOTENCY_HEADER}: ${exemption.reason}.`, [
        { field: IDEMPOTENCY_HEADER, reason: 'is not accepted on this route' },
      ]);
    }
    const key = parseIdempotencyKey(header);
    const actor = request.registryContext?.actor;
    if (key === null || !actor) return next.handle();
    const reply = context.switchToHttp().getResponse<FastifyReply>();
    const status =
      (Reflect.getMetadata(HTTP_CODE_METADATA, context.getHandler()) as number | undefined) ?? (request.method === 'POST' ? 201 : 200);
    const handle = async (): Promise<Answered> => {
      const value = await lastValueFrom(next.handle(), { defaultValue: undefined });
      const headers: Record<string, string> = {};
      for (const name of REPLAYED_HEADERS) {
        const v = reply.getHeader(name);
        if (typeof v === 'string') headers[name] = v;
      }
      return { value, response: { status, headers, body: value === undefined ? null : JSON.stringify(value) } };
    };
    const outcome = this.idempotency.run(
      { callerKind: actor.kind, callerId: actor.id, key },
      {
        method: request.method,
        path: request.url,
        hash: requestFingerprint(request.method, request.url, request.body, ifMatchOf(request.headers['if-match'])),
      },
      handle,
    );
    return from(outcome.then((o) => answer(o, reply)));
  }
}

/** The handler's value, or the kept answer with its headers and `Idempotent-Replayed: true`. */
function answer(outcome: KeyedOutcome, reply: FastifyReply): unknown {
  if (outcome.kind === 'ran') return outcome.value;
  const response: RecordedResponse = outcome.response;
  for (const [name, value] of Object.entries(response.headers)) void reply.header(name, value);
  void reply.header('idempotent-replayed', 'true');
  return response.body === null ? undefined : JSON.parse(response.body);
}

/** The If-Match header as one string (a repeated header joined as Fastify would list it). */
const ifMatchOf = (header: string | string[] | undefined): string | undefined => (Array.isArray(header) ? header.join(', ') : header);
