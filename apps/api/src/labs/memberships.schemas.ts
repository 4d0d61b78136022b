import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { LAB_ROLES } from '../auth/actor';
import { isPlainText, plainTextOnly } from '../common/plain-text';

export const memberParamSchema = z.object({ labId: z.uuid(), personId: z.uuid() }).strict();
export class MemberParamDto extends createZodDto(memberParamSchema) {}

export const setMembershipSchema = z
  .object({
    role: z.enum(LAB_ROLES).meta({ description: 'manager: the lab’s inventory, approvals, policies; analyst: reads it, records own work' }),
    externalRef: z
      .string()
      .trim()
      .min(1)
      .max(100)
      .refine(isPlainText, plainTextOnly)
      .nullable()
      .optional()
      .meta({ description: 'The lab’s own identifier for the person (e.g. in its sample-management system); unique in the lab' }),
  })
  .strict()
  .meta({ example: { role: 'analyst', externalRef: 'DWC-ANA-07' } });
export class SetMembershipDto extends createZodDto(setMembershipSchema) {}
export type SetMembership = z.infer<typeof setMembershipSchema>;

export const membershipSchema = z.object({
  labId: z.uuid(),
  personId: z.uuid(),
  role: z.enum(LAB_ROLES),
  externalRef: z.string().nullable(),
  createdAt: z.iso.datetime(),
  person: z.object({ email: z.string(), displayName: z.string(), status: z.string() }),
});
export class MembershipDto extends createZodDto(membershipSchema) {}
export type MembershipView = z.infer<typeof membershipSchema>;

export const membershipListSchema = z.object({ items: z.array(membershipSchema) });
export class MembershipListDto extends createZodDto(membershipListSchema) {}
