import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { pageQuerySchema } from '../common/pagination';
import { quantity } from '../common/quantity';
import { assetTagSchema, pageOf, stored, statusSchema } from '../inventory/inventory.schemas';

export const FACTOR_STATES = ['current', 'superseded', 'withdrawn'] as const;
export type FactorState = (typeof FACTOR_STATES)[number];

const stateSchema = z.enum(FACTOR_STATES).meta({
  description: 'current: in use; superseded: replaced by a newer calibration (kept as history); withdrawn: its calibration was voided',
});
const kindSchema = z.enum(['single', 'curve']).meta({
  description: 'single: one-mark ware (a ratio and a correction); curve: graduated ware (corrections at calibrated points)',
});

const CurvePointSchema = z.object({
  nominalVolumeMl: stored('Volume the point was tested at, mL', '5'),
  meanVolumeMl: stored('Mean delivered (or contained) volume at 20 °C, mL', '4.9968'),
  correctionMl: stored('Mean volume − tested volume, mL', '-0.0032'),
  expandedUncertaintyMl: stored('Expanded uncertainty of the point, mL', '0.0041'),
});
const curveSchema = z.array(CurvePointSchema).meta({ description: 'Calibrated points, ascending by volume' });

const iso = (description: string) => z.iso.datetime().meta({ description, example: '2026-03-02T08:15:00.000Z' });

// ---------------------------------------------------------------------------------------------
// Registry reads: list and one factor.

export const FactorListQuerySchema = pageQuerySchema.strict().extend({
  personId: z.uuid().optional().meta({ description: 'Only this person’s factors' }),
  vesselId: z.uuid().optional().meta({ description: 'Only this vessel’s factors' }),
  labId: z.uuid().optional().meta({ description: 'Only this lab’s factors' }),
  state: stateSchema.optional(),
});
export class FactorListQueryDto extends createZodDto(FactorListQuerySchema) {}
export type FactorListQuery = z.infer<typeof FactorListQuerySchema>;

export const FactorIdParamSchema = z.strictObject({ id: z.uuid({ error: 'must be a UUID' }) });
export class FactorIdParamDto extends createZodDto(FactorIdParamSchema) {}

export const FactorSchema = z.object({
  id: z.uuid(),
  labId: z.uuid(),
  personId: z.uuid().meta({ description: 'The person whose technique the factor characterises (the calibration’s performer)' }),
  vesselId: z.uuid(),
  calibrationId: z.uuid().meta({ description: 'The approved calibration it came from' }),
  kind: kindSchema,
  factor: stored('Mean volume at 20 °C / nominal volume (for a curve, at its largest point)', '0.99968').nullable(),
  correctionMl: stored('Mean volume at 20 °C − nominal volume, mL (single factors)', '-0.008').nullable(),
  curve: curveSchema.nullable(),
  expandedUncertaintyMl: stored('Expanded uncertainty, mL (for a curve, the largest of its points)', '0.012'),
  coverageFactor: stored('Coverage factor k', '2'),
  referenceTemperatureC: stored('Reference temperature, °C', '20'),
  validFrom: iso('The calibration’s date: valid from'),
  validUntil: iso('Valid until (the lab’s validity period after the calibration)'),
  state: stateSchema,
  endedAt: iso('When it stopped being current').nullable(),
  supersededById: z.uuid().nullable(),
  reviewRequired: z
    .boolean()
    .meta({ description: 'An instrument behind it was later found out of tolerance: review before relying on it' }),
  reviewRequiredAt: iso('When the review was asked for').nullable(),
  reviewReason: z.string().nullable(),
  createdAt: iso('When it was issued (the approval)'),
});
export class FactorDto extends createZodDto(FactorSchema) {}
export type FactorView = z.infer<typeof FactorSchema>;

export class FactorPageDto extends createZodDto(pageOf(FactorSchema)) {}

// ---------------------------------------------------------------------------------------------
// The factor service: lookup and correction, by ids or by the identifiers other systems hold.

const personIdentifiers = {
  personId: z.uuid({ error: 'must be a UUID' }).optional().meta({ description: 'The person, by id' }),
  email: z
    .email({ error: 'must be an email address' })
    .max(254)
    .transform((e) => e.toLowerCase())
    .optional()
    .meta({ description: 'The person, by email (case-insensitive)', example: 'lena.berger@waterworks.example' }),
  externalRef: z
    .string()
    .min(1)
    .max(100)
    .regex(/^[^\u0000-\u001F\u007F]+$/, { error: 'must not contain control characters' })
    .optional()
    .meta({ description: 'The person, by the identifier the vessel’s lab assigned to them', example: 'DW-ANA-07' }),
};
const vesselIdentifiers = {
  vesselId: z.uuid({ error: 'must be a UUID' }).optional().meta({ description: 'The vessel, by id' }),
  assetTag: assetTagSchema.optional().meta({ description: 'The vessel, by the label on it', example: 'PIP-25-004' }),
};

type Identified = { personId?: unknown; email?: unknown; externalRef?: unknown; vesselId?: unknown; assetTag?: unknown };

/** Exactly one person identifier and exactly one vessel identifier. */
function oneOfEach(value: Identified, ctx: z.RefinementCtx): void {
  const people = (['personId', 'email', 'externalRef'] as const).filter((k) => value[k] !== undefined);
  const vessels = (['vesselId', 'assetTag'] as const).filter((k) => value[k] !== undefined);
  if (people.length !== 1) {
    ctx.addIssue({
      code: 'custom',
      path: people.length ? [people[1] as string] : ['personId'],
      message: 'name the person by exactly one of personId, email, externalRef',
    });
  }
  if (vessels.length !== 1) {
    ctx.addIssue({
      code: 'custom',
      path: vessels.length ? [vessels[1] as string] : ['vesselId'],
      message: 'name the vessel by exactly one of vesselId, assetTag',
    });
  }
}

export const CurrentFactorQuerySchema = z
  .strictObject({
    ...personIdentifiers,
    ...vesselIdentifiers,
    at: z.iso
      .datetime({ offset: true, error: 'must be an ISO 8601 instant such as 2026-05-04T09:30:00Z' })
      .optional()
      .meta({ description: 'The factor that was in force at this instant (default: now), so a caller can prove which value it used' }),
    fallback: z.enum(['nominal']).optional().meta({
      description:
        'nominal: when the person has no factor for the vessel or it expired, answer with the nominal value and the vessel’s acceptance limit as its uncertainty (source: nominal-fallback) instead of the problem',
    }),
  })
  .superRefine(oneOfEach)
  .meta({ example: { assetTag: 'PIP-25-004', email: 'lena.berger@waterworks.example' } });
export class CurrentFactorQueryDto extends createZodDto(CurrentFactorQuerySchema) {}
export type CurrentFactorQuery = z.infer<typeof CurrentFactorQuerySchema>;

const fallbackFor = z
  .object({
    code: z.enum(['no-factor', 'factor-expired']),
    detail: z.string(),
    validUntil: iso('When the expired factor ended').nullable(),
  })
  .nullable()
  .meta({ description: 'For a nominal fallback: the problem it stands in for' });

export const CurrentFactorSchema = z.object({
  source: z.enum(['factor', 'nominal-fallback']).meta({
    description: 'factor: the person’s own factor; nominal-fallback: no usable factor, nominal value given because the caller asked for it',
  }),
  fallbackFor,
  factorId: z.uuid().nullable(),
  state: stateSchema.nullable(),
  kind: kindSchema.nullable(),
  personId: z.uuid(),
  vesselId: z.uuid(),
  labId: z.uuid(),
  nominalVolumeMl: stored('The vessel’s nominal volume, mL', '25'),
  factor: stored('Mean volume at 20 °C / nominal volume; 1 for a nominal fallback', '0.99968').nullable(),
  correctionMl: stored('Mean volume at 20 °C − nominal volume, mL; 0 for a nominal fallback', '-0.008').nullable(),
  curve: curveSchema.nullable(),
  expandedUncertaintyMl: stored('Expanded uncertainty, mL; the acceptance limit for a nominal fallback', '0.012'),
  coverageFactor: stored('Coverage factor k (null for a nominal fallback: the limit is a maximum permissible error)', '2').nullable(),
  referenceTemperatureC: stored('Reference temperature, °C', '20'),
  validFrom: iso('Valid from').nullable(),
  validUntil: iso('Valid until').nullable(),
  calibrationId: z.uuid().nullable(),
  vesselStatus: statusSchema,
  reviewRequired: z.boolean(),
  reviewReason: z.string().nullable(),
});
export class CurrentFactorDto extends createZodDto(CurrentFactorSchema) {}
export type CurrentFactorView = z.infer<typeof CurrentFactorSchema>;

const positiveVolume = quantity('Volume read on the vessel, mL', '12.5').refine((v) => Number(v) > 0, { error: 'must be greater than 0' });

export const CorrectionRequestSchema = z
  .strictObject({
    ...personIdentifiers,
    ...vesselIdentifiers,
    indicatedVolumeMl: positiveVolume,
    liquidTemperatureC: quantity('Temperature of the liquid (and so of the glass), °C', '23.5').optional(),
    allowNominalFallback: z.boolean().optional().meta({
      description:
        'When the person has no factor or it expired, answer with the indicated volume and the acceptance limit as its uncertainty (source: nominal-fallback) instead of the problem',
    }),
  })
  .superRefine(oneOfEach)
  .meta({ example: { assetTag: 'BUR-50-002', externalRef: 'DW-ANA-07', indicatedVolumeMl: '18.35', liquidTemperatureC: '22.4' } });
export class CorrectionRequestDto extends createZodDto(CorrectionRequestSchema) {}
export type CorrectionRequest = z.infer<typeof CorrectionRequestSchema>;

const pointRef = z.object({
  nominalVolumeMl: stored('Calibrated volume, mL', '10'),
  correctionMl: stored('Its correction, mL', '-0.006'),
  expandedUncertaintyMl: stored('Its expanded uncertainty, mL', '0.008'),
});

export const CorrectionSchema = z.object({
  source: z.enum(['factor', 'nominal-fallback']),
  fallbackFor,
  method: z.enum(['ratio', 'curve-point', 'curve-interpolation', 'nominal-fallback']).meta({
    description:
      'ratio: nominal × factor; curve-point: at a calibrated point; curve-interpolation: linear between the two neighbouring points (U: the larger of theirs); nominal-fallback: no correction',
  }),
  factorId: z.uuid().nullable(),
  calibrationId: z.uuid().nullable(),
  personId: z.uuid(),
  vesselId: z.uuid(),
  labId: z.uuid(),
  indicatedVolumeMl: stored('The volume read, as sent', '18.35'),
  correctionMl: stored('Correction applied, mL', '-0.0041'),
  correctedVolumeMl: stored('Volume delivered (or contained) at the reference temperature, mL', '18.3459'),
  expandedUncertaintyMl: stored('Its expanded uncertainty, mL', '0.012'),
  coverageFactor: stored('Coverage factor k (null for a nominal fallback)', '2').nullable(),
  referenceTemperatureC: stored('Reference temperature, °C', '20'),
  between: z.object({ lower: pointRef, upper: pointRef }).nullable().meta({ description: 'The calibrated points interpolated between' }),
  atLiquidTemperature: z
    .object({
      liquidTemperatureC: stored('As sent, °C', '22.4'),
      expansionCoefficientPerK: stored('The vessel’s cubic expansion coefficient γ, 1/K', '0.0000099'),
      expansionFactor: stored('1 + γ (t − reference temperature)', '1.00002376'),
      volumeMl: stored('Volume of liquid delivered (or contained) with glass and liquid at t, mL', '18.346336'),
      expandedUncertaintyMl: stored('Its expanded uncertainty, mL', '0.012'),
    })
    .nullable()
    .meta({ description: 'Only when liquidTemperatureC is sent: the vessel’s volume with the glass at the liquid’s temperature' }),
  validUntil: iso('The factor’s validity end').nullable(),
  vesselStatus: statusSchema,
  reviewRequired: z.boolean(),
});
export class CorrectionDto extends createZodDto(CorrectionSchema) {}
export type CorrectionView = z.infer<typeof CorrectionSchema>;
