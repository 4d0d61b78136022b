import { z } from 'zod';

/** The impact of finding a balance, thermometer or vessel out of tolerance, as every response shows it. */
export const ImpactSchema = z
  .object({
    subject: z.object({
      kind: z.enum(['balance', 'thermometer', 'vessel']).meta({ description: 'What was found out of tolerance' }),
      id: z.uuid(),
    }),
    since: z.iso
      .datetime()
      .nullable()
      .meta({ description: 'Calibrations performed from this instant on are listed; null = every calibration on record' }),
    reason: z.string().meta({ description: 'Written to each factor marked for review, and to its audit entry' }),
    calibrations: z
      .array(
        z.object({
          id: z.uuid(),
          vessel: z.object({ id: z.uuid(), assetTag: z.string() }),
          performer: z.object({ id: z.uuid(), displayName: z.string() }),
          performedAt: z.iso.datetime(),
          state: z.string().meta({ description: 'draft, submitted, approved or returned (voided calibrations are left out)' }),
        }),
      )
      .meta({ description: 'Calibrations that used it in that period, oldest first' }),
    factors: z
      .array(
        z.object({
          id: z.uuid(),
          calibrationId: z.uuid(),
          personId: z.uuid(),
          vesselId: z.uuid(),
          reviewRequiredAt: z.iso.datetime(),
          reviewReason: z.string(),
          markedNow: z.boolean().meta({ description: 'false when an earlier event had already marked it (its reason is kept)' }),
        }),
      )
      .meta({ description: 'The current factors made from those calibrations, all marked for review' }),
  })
  .meta({
    description:
      'What may be wrong because of this finding. A qualified person reviews each listed calibration and factor; the registry only marks them.',
  });
export type ImpactView = z.input<typeof ImpactSchema>;
