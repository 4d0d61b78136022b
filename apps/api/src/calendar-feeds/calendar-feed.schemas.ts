import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { pageQuerySchema } from '../common/pagination';
import { isPlainText, plainTextOnly } from '../common/plain-text';

/** Feed tokens: `rcal_` and 256 random bits in base64url. */
export const FEED_TOKEN_SHAPE = /^rcal_[A-Za-z0-9_-]{43}$/;

export const createFeedSchema = z.strictObject({
  name: z
    .string({ error: 'is required' })
    .trim()
    .min(1, { error: 'must not be empty' })
    .max(100, { error: 'must be at most 100 characters' })
    .refine(isPlainText, plainTextOnly)
    .meta({ description: 'Whose calendar it is for, to recognise it when revoking', example: 'DW-CHEM shared calendar' }),
  showPeople: z
    .boolean({ error: 'must be true or false' })
    .default(false)
    .meta({
      description:
        'Name the holder of each personal factor falling due. Anyone with the token reads the feed, so names are left out ' +
        'unless asked for; fixed at creation (revoke and create another to change it).',
    }),
});
export class CreateFeedDto extends createZodDto(createFeedSchema) {}
export type CreateFeed = z.output<typeof createFeedSchema>;

export const labParamSchema = z.strictObject({ labId: z.uuid({ error: 'must be a UUID' }) });
export class FeedLabParamDto extends createZodDto(labParamSchema) {}
export const feedParamSchema = z.strictObject({ labId: z.uuid({ error: 'must be a UUID' }), feedId: z.uuid({ error: 'must be a UUID' }) });
export class FeedParamDto extends createZodDto(feedParamSchema) {}

export const feedListQuerySchema = pageQuerySchema.strict();
export class FeedListQueryDto extends createZodDto(feedListQuerySchema) {}
export type FeedListQuery = z.output<typeof feedListQuerySchema>;

export const feedQuerySchema = z.strictObject({
  token: z
    .string({ error: 'is required' })
    .max(200, { error: 'is not a feed token' })
    .meta({ description: 'The feed’s token, as shown once at creation' }),
});
export class FeedQueryDto extends createZodDto(feedQuerySchema) {}

export const feedSchema = z.object({
  id: z.uuid(),
  labId: z.uuid(),
  name: z.string(),
  showPeople: z.boolean().meta({ description: 'Whether factor events name their holder' }),
  createdById: z.uuid(),
  createdAt: z.iso.datetime(),
  revokedAt: z.iso.datetime().nullable(),
  revokedById: z.uuid().nullable(),
});
export class FeedDto extends createZodDto(feedSchema) {}
export type FeedView = z.infer<typeof feedSchema>;

export const createdFeedSchema = feedSchema.extend({
  token: z.string().meta({ description: 'Shown once; only its SHA-256 is stored' }),
  path: z
    .string()
    .meta({ description: 'Subscribe to this path of the service (with the token)', example: '/v1/calendar-feed.ics?token=rcal_…' }),
});
export class CreatedFeedDto extends createZodDto(createdFeedSchema) {}

export const feedPageSchema = z.object({ items: z.array(feedSchema), nextCursor: z.string().nullable() });
export class FeedPageDto extends createZodDto(feedPageSchema) {}
