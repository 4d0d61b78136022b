import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { pageQuerySchema } from '../common/pagination';
import { isPlainText, plainTextOnly } from '../common/plain-text';

/** Lab codes as the database accepts them (CHECK labs_code_format). */
export const LAB_CODE_PATTERN = /^[A-Z0-9][A-Z0-9-]{1,31}$/;

/** A canonical IANA zone name that this runtime knows ("UTC", "Europe/Vienna"). */
export function isIanaTimeZone(zone: string): boolean {
  try {
    return new Intl.DateTimeFormat('en', { timeZone: zone }).resolvedOptions().timeZone === zone;
  } catch {
    return false;
  }
}

const code = z
  .string()
  .regex(LAB_CODE_PATTERN, 'must be 2 to 32 capital letters, digits or hyphens, starting with a letter or digit')
  .meta({ description: 'Short code, unique in the registry; never changes', example: 'DWC' });
const name = z.string().trim().min(1).max(200).refine(isPlainText, plainTextOnly).meta({ example: 'Drinking-water chemistry' });
const timeZone = z
  .string()
  .max(64)
  .refine(isIanaTimeZone, 'must be a canonical IANA time zone such as Europe/Vienna or UTC')
  .meta({ description: 'The lab’s local time zone (due dates and reports)', example: 'Europe/Vienna' });
const fourEyesRequired = z.boolean().meta({ description: 'Calibrations need a second person’s approval (default true)' });
/** Policies calibrations and factors read; each optional on create (defaults in the database). */
const settings = {
  balanceCheckWindowDays: z
    .number()
    .int()
    .min(1)
    .max(366)
    .meta({ description: 'A calibration needs a passing routine check of its balance within this many days before it (default 1)' }),
  factorValidityDays: z
    .number()
    .int()
    .min(1)
    .max(3660)
    .meta({ description: 'How long a personal factor stays valid after its calibration (default 365)' }),
  allowTraceabilityExceptions: z
    .boolean()
    .meta({ description: 'A calibration may be submitted despite a traceability rule, with a recorded reason (default false)' }),
  quarantineOnFailedCalibration: z.boolean().meta({ description: 'Approving a failed calibration quarantines the vessel (default true)' }),
};
const optionalSettings = {
  balanceCheckWindowDays: settings.balanceCheckWindowDays.optional(),
  factorValidityDays: settings.factorValidityDays.optional(),
  allowTraceabilityExceptions: settings.allowTraceabilityExceptions.optional(),
  quarantineOnFailedCalibration: settings.quarantineOnFailedCalibration.optional(),
};

export const createLabSchema = z
  .object({ code, name, timeZone, fourEyesRequired: fourEyesRequired.optional(), ...optionalSettings })
  .strict()
  .meta({ example: { code: 'WWL', name: 'Wastewater laboratory', timeZone: 'Europe/Vienna', fourEyesRequired: true } });
export class CreateLabDto extends createZodDto(createLabSchema) {}
export type CreateLab = z.infer<typeof createLabSchema>;

export const updateLabSchema = z
  .object({ name: name.optional(), timeZone: timeZone.optional(), fourEyesRequired: fourEyesRequired.optional(), ...optionalSettings })
  .strict()
  .refine((v) => Object.values(v).some((x) => x !== undefined), 'give at least one member to change')
  .meta({ example: { name: 'Teaching laboratory (training bench)', fourEyesRequired: false } });
export class UpdateLabDto extends createZodDto(updateLabSchema) {}
export type UpdateLab = z.infer<typeof updateLabSchema>;

export const labIdParamSchema = z.object({ labId: z.uuid() }).strict();
export class LabIdParamDto extends createZodDto(labIdParamSchema) {}

export const labListQuerySchema = pageQuerySchema.strict();
export class LabListQueryDto extends createZodDto(labListQuerySchema) {}
export type LabListQuery = z.infer<typeof labListQuerySchema>;

export const labSchema = z.object({
  id: z.uuid(),
  code: z.string(),
  name: z.string(),
  timeZone: z.string(),
  fourEyesRequired: z.boolean(),
  ...settings,
  retiredAt: z.iso.datetime().nullable(),
  version: z.number().int().meta({ description: 'Increases with every change; the ETag is "v<version>"' }),
  createdAt: z.iso.datetime(),
  updatedAt: z.iso.datetime(),
});
export class LabDto extends createZodDto(labSchema) {}
export type LabView = z.infer<typeof labSchema>;

export const labPageSchema = z.object({ items: z.array(labSchema), nextCursor: z.string().nullable() });
export class LabPageDto extends createZodDto(labPageSchema) {}
