import {
  applyDecorators,
  type CallHandler,
  type ExecutionContext,
  Injectable,
  type NestInterceptor,
  UseInterceptors,
} from '@nestjs/common';
import { ApiHeader } from '@nestjs/swagger';
import type { FastifyReply, FastifyRequest } from 'fastify';
import { map, type Observable } from 'rxjs';

import { etagOf } from './concurrency';

/** Sets `ETag` from the `version` of the single resource a handler returns. */
@Injectable()
export class EtagInterceptor implements NestInterceptor {
  intercept(context: ExecutionContext, next: CallHandler): Observable<unknown> {
    const reply = context.switchToHttp().getResponse<FastifyReply>();
    return next.handle().pipe(
      map((body: unknown) => {
        const version = (body as { version?: unknown } | null)?.version;
        if (typeof version === 'number') void reply.header('etag', etagOf(version));
        return body;
      }),
    );
  }
}

/** On a create (POST returning an `id`), `Location` pointing at the new resource. */
@Injectable()
export class LocationInterceptor implements NestInterceptor {
  intercept(context: ExecutionContext, next: CallHandler): Observable<unknown> {
    const request = context.switchToHttp().getRequest<FastifyRequest>();
    const reply = context.switchToHttp().getResponse<FastifyReply>();
    return next.handle().pipe(
      map((body: unknown) => {
        const id = (body as { id?: unknown } | null)?.id;
        if (request.method === 'POST' && typeof id === 'string') void reply.header('location', `${request.url.split('?')[0]}/${id}`);
        return body;
      }),
    );
  }
}

/** The response of a create carries `Location`. */
export const WithLocation = () => UseInterceptors(LocationInterceptor);

/** The response carries the resource's ETag (its `version`). */
export const WithEtag = () => UseInterceptors(EtagInterceptor);

/** Updates need `If-Match` with the ETag read: 428 without it, 412 when stale. */
export const NeedsIfMatch = () =>
  applyDecorators(
    WithEtag(),
    ApiHeader({ name: 'If-Match', required: true, description: 'The ETag from your last read, e.g. "v3"', example: '"v1"' }),
  );
