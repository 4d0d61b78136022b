import {
  applyDecorators,
  type CallHandler,
  type ExecutionContext,
  Injectable,
  type NestInterceptor,
  UseInterceptors,
} from '@nestjs/common';
import { ApiHeader, ApiResponse } from '@nestjs/swagger';
import type { FastifyReply, FastifyRequest } from 'fastify';
import { createZodDto } from 'nestjs-zod';
import { map, type Observable } from 'rxjs';
import { z } from 'zod';

import { CredentialScopes, PeopleOnly } from '../auth/auth.decorators';
import { etagOf } from '../common/http/concurrency';

/** `:id` of an inventory item. */
export const ItemIdParamSchema = z.strictObject({ id: z.uuid({ error: 'must be a UUID' }) });
export class ItemIdParamDto extends createZodDto(ItemIdParamSchema) {}

/**
 * Sets `ETag` from the `version` of the item a handler returns and, on a
 * create (201), `Location` pointing at the new item.
 */
@Injectable()
export class ItemHeadersInterceptor implements NestInterceptor {
  intercept(context: ExecutionContext, next: CallHandler): Observable<unknown> {
    const http = context.switchToHttp();
    const reply = http.getResponse<FastifyReply>();
    const request = http.getRequest<FastifyRequest>();
    return next.handle().pipe(
      map((body: unknown) => {
        const item = body as { version?: unknown; id?: unknown } | null;
        if (typeof item?.version === 'number') void reply.header('etag', etagOf(item.version));
        if (request.method === 'POST' && typeof item?.id === 'string') {
          void reply.header('location', `${request.url.split('?')[0]}/${item.id}`);
        }
        return body;
      }),
    );
  }
}

const READ_DOC =
  'Readers: anyone who can read the item’s lab (its analysts and managers, auditors, administrators, service credentials with ' +
  '`inventory:read` for that lab). Items of other labs answer 404.';

/** A read route: people who can read the lab, and credentials with inventory:read. */
export const InventoryRead = () => applyDecorators(CredentialScopes('inventory:read'), ApiResponse({ status: 404, description: READ_DOC }));

/** A create route: the lab's managers and administrators. */
export const InventoryCreate = () =>
  applyDecorators(
    PeopleOnly(),
    UseInterceptors(ItemHeadersInterceptor),
    ApiResponse({ status: 400, description: 'validation-failed: unknown, missing or invalid members, named in `errors`' }),
    ApiResponse({ status: 403, description: 'forbidden: only the lab’s managers or an administrator create items' }),
    ApiResponse({ status: 409, description: 'conflict: the asset tag is already registered (errors name `assetTag`)' }),
  );

/** One item with its ETag. */
export const InventoryGet = () => applyDecorators(InventoryRead(), UseInterceptors(ItemHeadersInterceptor));

/** A PATCH route: If-Match required, property-level rules. */
export const InventoryUpdate = () =>
  applyDecorators(
    PeopleOnly(),
    UseInterceptors(ItemHeadersInterceptor),
    ApiHeader({ name: 'if-match', required: true, description: 'The ETag from your last read, e.g. "v3"', example: '"v1"' }),
    ApiResponse({
      status: 400,
      description: 'validation-failed: unknown or read-only members (labId, version, id, timestamps), or a missing reason',
    }),
    ApiResponse({
      status: 403,
      description: 'forbidden: auditors and credentials never write; analysts may change only location and notes (errors name the field)',
    }),
    ApiResponse({ status: 404, description: 'not-found: no such item, or not in a lab you can read' }),
    ApiResponse({ status: 409, description: 'conflict: the new asset tag is already registered' }),
    ApiResponse({ status: 412, description: 'precondition-failed: the item changed since you read it; read it again' }),
    ApiResponse({ status: 428, description: 'precondition-required: send If-Match' }),
  );
