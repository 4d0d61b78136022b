import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { LAB_ROLES, REGISTRY_ROLES } from '../auth/actor';
import { pageQuerySchema } from '../common/pagination';
import { isPlainText, plainTextOnly } from '../common/plain-text';

/** A person's status: active people may sign in; disabled people cannot, and their sessions ended when disabled. */
export const PERSON_STATUSES = ['active', 'disabled'] as const;

const email = z
  .string()
  .trim()
  .toLowerCase()
  .max(254)
  .regex(/^[^@\s]+@[^@\s]+$/, 'must be an email address')
  .refine(isPlainText, plainTextOnly)
  .meta({ description: 'Sign-in name, unique in the registry (stored in lower case)', example: 'marta.lindqvist@waterworks.example' });
const displayName = z.string().trim().min(1).max(200).refine(isPlainText, plainTextOnly).meta({ example: 'Marta Lindqvist' });
const registryRole = z.enum(REGISTRY_ROLES).nullable().meta({
  description: 'administrator: everything incl. people and labs; auditor: reads everything, changes nothing; null: lab roles only',
});

export const createPersonSchema = z
  .object({ email, displayName, registryRole: registryRole.optional() })
  .strict()
  .meta({ example: { email: 'marta.lindqvist@waterworks.example', displayName: 'Marta Lindqvist', registryRole: null } });
export class CreatePersonDto extends createZodDto(createPersonSchema) {}
export type CreatePerson = z.infer<typeof createPersonSchema>;

export const updatePersonSchema = z
  .object({ displayName: displayName.optional(), registryRole: registryRole.optional(), status: z.enum(PERSON_STATUSES).optional() })
  .strict()
  .refine((v) => Object.values(v).some((x) => x !== undefined), 'give at least one of displayName, registryRole, status')
  .meta({ example: { status: 'disabled' } });
export class UpdatePersonDto extends createZodDto(updatePersonSchema) {}
export type UpdatePerson = z.infer<typeof updatePersonSchema>;

export const personIdParamSchema = z.object({ personId: z.uuid() }).strict();
export class PersonIdParamDto extends createZodDto(personIdParamSchema) {}

export const personListQuerySchema = pageQuerySchema
  .extend({
    status: z.enum(PERSON_STATUSES).optional(),
    labId: z.uuid().optional().meta({ description: 'Only members of this lab' }),
  })
  .strict();
export class PersonListQueryDto extends createZodDto(personListQuerySchema) {}
export type PersonListQuery = z.infer<typeof personListQuerySchema>;

export const personSchema = z.object({
  id: z.uuid(),
  email: z.string(),
  displayName: z.string(),
  registryRole: z.enum(REGISTRY_ROLES).nullable(),
  status: z.enum(PERSON_STATUSES),
  mustChangePassword: z.boolean(),
  passwordSetAt: z.iso.datetime().nullable().meta({ description: 'When the person last chose a password' }),
  labs: z.array(z.object({ labId: z.uuid(), role: z.enum(LAB_ROLES), externalRef: z.string().nullable() })),
  version: z.number().int(),
  createdAt: z.iso.datetime(),
  updatedAt: z.iso.datetime(),
});
export class PersonDto extends createZodDto(personSchema) {}
export type PersonView = z.infer<typeof personSchema>;

export const createdPersonSchema = personSchema.extend({
  initialPassword: z.string().meta({
    description: 'One-time password, shown only in this response; the person must change it after signing in',
    example: 'Kp7wX-3mQr9-bZt4e-Hn2Ys',
  }),
});
export class CreatedPersonDto extends createZodDto(createdPersonSchema) {}
export type CreatedPersonView = z.infer<typeof createdPersonSchema>;

export const personPageSchema = z.object({ items: z.array(personSchema), nextCursor: z.string().nullable() });
export class PersonPageDto extends createZodDto(personPageSchema) {}
