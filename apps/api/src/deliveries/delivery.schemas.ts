import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { pageQuerySchema } from '../common/pagination';
import { DELIVERY_CHANNELS, DELIVERY_STATES } from './delivery.repository';

const uuid = z.uuid({ error: (issue) => (issue.input === undefined ? 'is required' : 'must be a UUID') });

export const deliveryListQuerySchema = pageQuerySchema
  .extend({
    channel: z.enum(DELIVERY_CHANNELS).optional(),
    state: z.enum(DELIVERY_STATES).optional(),
    webhookId: uuid.optional(),
    noticeId: uuid.optional(),
  })
  .strict();
export class DeliveryListQueryDto extends createZodDto(deliveryListQuerySchema) {}
export type DeliveryListQuery = z.output<typeof deliveryListQuerySchema>;

export const deliveryParamSchema = z.strictObject({ labId: uuid, deliveryId: uuid });
export class DeliveryParamDto extends createZodDto(deliveryParamSchema) {}

const instant = (description: string) => z.iso.datetime().nullable().meta({ description });

export const deliverySchema = z.object({
  id: z.uuid().meta({ description: 'Also sent as `Registry-Delivery`; the same on every attempt' }),
  noticeId: z.uuid(),
  labId: z.uuid(),
  eventKind: z.string().meta({ description: 'The notice’s event kind' }),
  subjectLabel: z.string(),
  dueOn: z.iso.date(),
  channel: z.enum(DELIVERY_CHANNELS),
  webhookId: z.uuid().nullable(),
  recipientId: z.uuid().nullable(),
  target: z.string().meta({ description: 'The URL or e-mail address when the delivery was created' }),
  state: z.enum(DELIVERY_STATES).meta({ description: 'pending (attempts remain), delivered, or failed (no attempt left)' }),
  attempts: z.number().int(),
  attemptLimit: z.number().int().meta({ description: 'Attempts allowed: DELIVERY_MAX_ATTEMPTS, raised by each redelivery' }),
  nextAttemptAt: instant('When the next attempt is due (pending only)'),
  lastAttemptAt: instant('When the last attempt started'),
  lastStatusCode: z.number().int().nullable().meta({ description: 'HTTP status of the last webhook answer' }),
  lastError: z.string().nullable(),
  deliveredAt: instant('When it was delivered'),
  failedAt: instant('When the last allowed attempt failed'),
  redeliveries: z.number().int().meta({ description: 'Times it was redelivered by hand' }),
  createdAt: z.iso.datetime(),
});
export class DeliveryDto extends createZodDto(deliverySchema) {}
export type DeliveryView = z.infer<typeof deliverySchema>;

export const deliveryPageSchema = z.object({ items: z.array(deliverySchema), nextCursor: z.string().nullable() });
export class DeliveryPageDto extends createZodDto(deliveryPageSchema) {}
