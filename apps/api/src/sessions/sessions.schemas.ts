import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { REGISTRY_ROLES } from '../auth/actor';
import { isPlainText, plainTextOnly } from '../common/plain-text';
import { PASSWORD_MAX_LENGTH, PASSWORD_MIN_LENGTH } from './password-policy';

export const signInSchema = z
  .object({
    // Kept with a failed attempt (throttle and audit entry), so refused like every stored text.
    email: z
      .string()
      .trim()
      .toLowerCase()
      .min(1)
      .max(254)
      .refine(isPlainText, plainTextOnly)
      .meta({ example: 'ines.kovac@waterworks.example' }),
    // Longer than any acceptable password, so an old or pasted value is still checked, but bounded.
    password: z.string().min(1).max(1024).meta({ example: 'tap water conductivity at dawn' }),
  })
  .strict();
export class SignInDto extends createZodDto(signInSchema) {}
export type SignIn = z.infer<typeof signInSchema>;

export const signedInSchema = z.object({
  token: z.string().meta({ description: 'Bearer token for `Authorization: Bearer …`; shown only here' }),
  expiresAt: z.iso.datetime().meta({ description: 'Absolute end of the session; it also ends after the idle timeout' }),
  person: z.object({
    id: z.uuid(),
    email: z.string(),
    displayName: z.string(),
    registryRole: z.enum(REGISTRY_ROLES).nullable(),
    mustChangePassword: z.boolean().meta({ description: 'True after an initial password: change it with POST /v1/me/password' }),
  }),
});
export class SignedInDto extends createZodDto(signedInSchema) {}
export type SignedIn = z.infer<typeof signedInSchema>;

export const changePasswordSchema = z
  .object({
    currentPassword: z.string().min(1).max(1024),
    newPassword: z
      .string()
      .max(1024)
      .meta({
        description: `${PASSWORD_MIN_LENGTH} to ${PASSWORD_MAX_LENGTH} characters; not a common password; not containing your email name`,
      }),
  })
  .strict()
  .meta({ example: { currentPassword: 'Kp7wX-3mQr9-bZt4e-Hn2Ys', newPassword: 'burette meniscus at eye level' } });
export class ChangePasswordDto extends createZodDto(changePasswordSchema) {}
export type ChangePassword = z.infer<typeof changePasswordSchema>;
