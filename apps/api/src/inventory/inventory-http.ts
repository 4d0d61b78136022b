import { applyDecorators } from '@nestjs/common';
import { ApiResponse } from '@nestjs/swagger';
import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { CredentialScopes, PeopleOnly } from '../auth/auth.decorators';
import { NeedsIfMatch, WithEtag, WithLocation } from '../common/http/etag.interceptor';

/** `:id` of an inventory item. */
export const ItemIdParamSchema = z.strictObject({ id: z.uuid({ error: 'must be a UUID' }) });
export class ItemIdParamDto extends createZodDto(ItemIdParamSchema) {}

const READ_DOC =
  'Readers: anyone who can read the item’s lab (its analysts and managers, auditors, administrators, service credentials with ' +
  '`inventory:read` for that lab). Items of other labs answer 404.';

/** A read route: people who can read the lab, and credentials with inventory:read. */
export const InventoryRead = () => applyDecorators(CredentialScopes('inventory:read'), ApiResponse({ status: 404, description: READ_DOC }));

/** A create route: the lab's managers and administrators. */
export const InventoryCreate = () =>
  applyDecorators(
    PeopleOnly(),
    WithEtag(),
    WithLocation(),
    ApiResponse({ status: 400, description: 'validation-failed: unknown, missing or invalid members, named in `errors`' }),
    ApiResponse({ status: 403, description: 'forbidden: only the lab’s managers or an administrator create items' }),
    ApiResponse({ status: 409, description: 'conflict: the asset tag is already registered (errors name `assetTag`)' }),
  );

/** One item with its ETag. */
export const InventoryGet = () => applyDecorators(InventoryRead(), WithEtag());

/** A PATCH route: If-Match required, property-level rules. */
export const InventoryUpdate = () =>
  applyDecorators(
    PeopleOnly(),
    NeedsIfMatch(),
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
