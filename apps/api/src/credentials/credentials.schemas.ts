import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { SCOPES } from '../auth/actor';
import { pageQuerySchema } from '../common/pagination';
import { isPlainText, plainTextOnly } from '../common/plain-text';

export const CREDENTIAL_STATUSES = ['active', 'revoked'] as const;

const scopes = z
  .array(z.enum(SCOPES))
  .min(1)
  .max(SCOPES.length)
  .refine((s) => new Set(s).size === s.length, 'must not repeat a scope')
  .meta({ description: 'What the other system may do' });
const labIds = z
  .union([z.literal('all'), z.array(z.uuid()).min(1).max(100)])
  .refine((v) => v === 'all' || new Set(v).size === v.length, 'must not repeat a lab')
  .meta({ description: '"all", or the only labs whose objects the credential reaches' });

export const createCredentialSchema = z
  .object({ name: z.string().trim().min(1).max(200).refine(isPlainText, plainTextOnly), scopes, labIds })
  .strict()
  .meta({
    example: {
      name: 'Sample-management system, drinking-water lab',
      scopes: ['factors:read', 'corrections:write'],
      labIds: ['6f1c2a4e-8d0b-4c3e-9a57-1b2d3e4f5a60'],
    },
  });
export class CreateCredentialDto extends createZodDto(createCredentialSchema) {}
export type CreateCredential = z.infer<typeof createCredentialSchema>;

export const credentialIdParamSchema = z.object({ credentialId: z.uuid() }).strict();
export class CredentialIdParamDto extends createZodDto(credentialIdParamSchema) {}

export const credentialListQuerySchema = pageQuerySchema.extend({ status: z.enum(CREDENTIAL_STATUSES).optional() }).strict();
export class CredentialListQueryDto extends createZodDto(credentialListQuerySchema) {}
export type CredentialListQuery = z.infer<typeof credentialListQuerySchema>;

export const credentialSchema = z.object({
  id: z.uuid(),
  name: z.string(),
  keyId: z.string().meta({ description: 'Public part of the key (`rk_<keyId>.…`), to recognise it in logs' }),
  scopes: z.array(z.enum(SCOPES)),
  labIds: z.union([z.literal('all'), z.array(z.uuid())]),
  status: z.enum(CREDENTIAL_STATUSES),
  createdBy: z.uuid(),
  createdAt: z.iso.datetime(),
  lastUsedAt: z.iso.datetime().nullable().meta({ description: 'Last use, to the minute' }),
  revokedAt: z.iso.datetime().nullable(),
  replacesId: z.uuid().nullable().meta({ description: 'The credential this one replaced when rotated' }),
  version: z.number().int(),
});
export class CredentialDto extends createZodDto(credentialSchema) {}
export type CredentialView = z.infer<typeof credentialSchema>;

export const issuedCredentialSchema = credentialSchema.extend({
  key: z.string().meta({
    description: 'The bearer key, shown only in this response: store it in the other system now',
    example: 'rk_3f9a0c1d2b4e5f60.q2Vb…',
  }),
});
export class IssuedCredentialDto extends createZodDto(issuedCredentialSchema) {}
export type IssuedCredentialView = z.infer<typeof issuedCredentialSchema>;

export const credentialPageSchema = z.object({ items: z.array(credentialSchema), nextCursor: z.string().nullable() });
export class CredentialPageDto extends createZodDto(credentialPageSchema) {}
