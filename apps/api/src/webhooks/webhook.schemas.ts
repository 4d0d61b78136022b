import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { pageQuerySchema } from '../common/pagination';
import { isPlainText, plainTextOnly } from '../common/plain-text';

/** Events a webhook may subscribe to; the notices table names the same kinds. */
export const WEBHOOK_EVENT_KINDS = ['due-soon', 'overdue'] as const;
export type WebhookEventKind = (typeof WEBHOOK_EVENT_KINDS)[number];
export const MAX_URL_LENGTH = 2000;

const uuid = z.uuid({ error: (issue) => (issue.input === undefined ? 'is required' : 'must be a UUID') });

/** The URL as the WHATWG parser writes it; http or https, a host, no user name or password (it would be stored in clear). */
function normalisedUrl(value: string): string | null {
  if (!URL.canParse(value)) return null;
  const url = new URL(value);
  if (!['http:', 'https:'].includes(url.protocol) || !url.hostname || url.username || url.password) return null;
  return url.href;
}

const url = z
  .string({ error: (issue) => (issue.input === undefined ? 'is required' : 'must be a string') })
  .trim()
  .max(MAX_URL_LENGTH)
  .transform((v, ctx) => {
    const href = normalisedUrl(v);
    if (href === null || href.length > MAX_URL_LENGTH) {
      ctx.addIssue({ code: 'custom', message: 'must be an http:// or https:// URL with a host and without a user name or password' });
      return z.NEVER;
    }
    return href;
  })
  .meta({ description: 'Where deliveries are POSTed (http or https)', example: 'https://samples.waterworks.example/hooks/registry' });
const description = z
  .string()
  .trim()
  .max(500)
  .refine(isPlainText, plainTextOnly)
  .meta({ description: 'What the endpoint is for', example: 'Sample-management system, drinking-water lab' });
const eventKinds = z
  .array(z.enum(WEBHOOK_EVENT_KINDS))
  .min(1)
  .max(10)
  .refine((kinds) => new Set(kinds).size === kinds.length, { error: 'must not repeat an event kind' })
  .meta({ description: 'The notices to deliver: `due-soon`, `overdue`', example: ['due-soon', 'overdue'] });
const enabled = z
  .boolean()
  .meta({ description: 'A disabled endpoint gets no new deliveries; its pending ones fail at their next attempt' });

export const createWebhookSchema = z
  .strictObject({ url, description: description.default(''), eventKinds, enabled: enabled.default(true) })
  .meta({
    example: {
      url: 'https://samples.waterworks.example/hooks/registry',
      description: 'Due dates into the sample-management system',
      eventKinds: ['due-soon', 'overdue'],
    },
  });
export class CreateWebhookDto extends createZodDto(createWebhookSchema) {}
export type CreateWebhook = z.output<typeof createWebhookSchema>;

export const updateWebhookSchema = z
  .strictObject({
    url: url.optional(),
    description: description.optional(),
    eventKinds: eventKinds.optional(),
    enabled: enabled.optional(),
  })
  .refine((body) => Object.values(body).some((v) => v !== undefined), { error: 'must change at least one member' })
  .meta({ example: { enabled: false } });
export class UpdateWebhookDto extends createZodDto(updateWebhookSchema) {}
export type UpdateWebhook = z.output<typeof updateWebhookSchema>;

export const labParamSchema = z.strictObject({ labId: uuid });
export class LabParamDto extends createZodDto(labParamSchema) {}
export const webhookParamSchema = z.strictObject({ labId: uuid, webhookId: uuid });
export class WebhookParamDto extends createZodDto(webhookParamSchema) {}

export const webhookListQuerySchema = pageQuerySchema.extend({ enabled: z.enum(['true', 'false']).optional() }).strict();
export class WebhookListQueryDto extends createZodDto(webhookListQuerySchema) {}
export type WebhookListQuery = z.output<typeof webhookListQuerySchema>;

export const webhookSchema = z.object({
  id: z.uuid(),
  labId: z.uuid(),
  url: z.string(),
  description: z.string(),
  eventKinds: z.array(z.enum(WEBHOOK_EVENT_KINDS)),
  enabled: z.boolean(),
  secretRotatedAt: z.iso.datetime().meta({ description: 'When the current signing secret was issued' }),
  createdById: z.uuid(),
  createdAt: z.iso.datetime(),
  updatedAt: z.iso.datetime(),
  version: z.number().int(),
});
export class WebhookDto extends createZodDto(webhookSchema) {}
export type WebhookView = z.infer<typeof webhookSchema>;

export const issuedWebhookSchema = webhookSchema.extend({
  secret: z.string().meta({
    description:
      'The signing secret, shown only in this response: keep it with the receiving system to verify `Registry-Signature`. ' +
      'Lost? Rotate it.',
    example: 'rwh_Vq3J…',
  }),
});
export class IssuedWebhookDto extends createZodDto(issuedWebhookSchema) {}
export type IssuedWebhookView = z.infer<typeof issuedWebhookSchema>;

export const webhookPageSchema = z.object({ items: z.array(webhookSchema), nextCursor: z.string().nullable() });
export class WebhookPageDto extends createZodDto(webhookPageSchema) {}
