import { ACCURACY_CLASSES, type AccuracyClass, VESSEL_KINDS, type VesselKind } from '@registry/metrology';
import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

const FAMILIES = ['ISO', 'ASTM', 'USP'] as const;

export const ToleranceQuerySchema = z.strictObject({
  kind: z
    .enum(VESSEL_KINDS as [VesselKind, ...VesselKind[]])
    .optional()
    .meta({ description: 'Only tables that cover this kind of vessel', example: 'one-mark-pipette' }),
  accuracyClass: z
    .enum(ACCURACY_CLASSES as [AccuracyClass, ...AccuracyClass[]])
    .optional()
    .meta({ description: 'Only tables that define this class', example: 'AS' }),
  family: z.enum(FAMILIES).optional().meta({ description: 'Only tables of this family of standards', example: 'ISO' }),
});
export class ToleranceQueryDto extends createZodDto(ToleranceQuerySchema) {}
export type ToleranceQuery = z.output<typeof ToleranceQuerySchema>;

const byClass = z
  .object({ A: z.string().optional(), AS: z.string().optional(), B: z.string().optional(), none: z.string().optional() })
  .meta({ description: 'mL by accuracy class, as published (decimal strings)' });

const ToleranceTableSchema = z.object({
  id: z.string(),
  family: z.enum(FAMILIES),
  standard: z.string(),
  table: z.string(),
  title: z.string(),
  kinds: z.array(z.string()),
  classes: z.array(z.string()),
  verification: z
    .record(z.string(), z.enum(['checked', 'from-memory']))
    .meta({ description: 'Per class: checked against a published copy, or from memory (check the standard before relying on it)' }),
  checkedAgainst: z.string().nullable(),
  note: z.string().nullable(),
  rows: z.array(
    z.object({
      nominalMl: z.string(),
      limitMl: byClass,
      randomLimitMl: byClass.nullable().meta({ description: 'Random-error limit (a standard deviation), piston pipettes only' }),
      fromMemory: z.boolean().meta({ description: 'This row is from memory even if its table is checked' }),
    }),
  ),
});

export const ToleranceListSchema = z.object({
  caution: z.string(),
  tables: z.array(ToleranceTableSchema),
});
export class ToleranceListDto extends createZodDto(ToleranceListSchema) {}
export type ToleranceList = z.input<typeof ToleranceListSchema>;

export const MaterialListSchema = z
  .object({
    materials: z.array(
      z.object({
        id: z.string().meta({ description: 'Use as `material` in a gravimetric-volume request' }),
        name: z.string(),
        expansionCoefficientPerK: z.string().meta({ description: 'Cubic expansion coefficient γ, 1/K (decimal string, plain notation)' }),
        source: z.string(),
      }),
    ),
  })
  .meta({
    example: {
      materials: [{ id: 'borosilicate-3-3', name: 'Borosilicate glass 3.3', expansionCoefficientPerK: '0.0000099', source: 'ISO 3585 …' }],
    },
  });
export class MaterialListDto extends createZodDto(MaterialListSchema) {}
export type MaterialList = z.input<typeof MaterialListSchema>;
