import { createZodDto } from 'nestjs-zod';
import { z } from 'zod';

import { VesselFieldsSchema } from './vessel.schemas';

/** CSV columns: exactly the members of a create request (without labId, which the query names). */
export const IMPORT_COLUMNS = Object.keys(VesselFieldsSchema.shape) as (keyof typeof VesselFieldsSchema.shape)[];
export const REQUIRED_COLUMNS = ['assetTag', 'kind', 'nominalVolumeMl', 'accuracyClass'] as const;

/** Refusals listed in one 422 answer; `totalErrors` counts them all. */
export const MAX_REPORTED_ERRORS = 200;
export const MAX_IMPORT_ROWS = 50_000;

export const IMPORT_EXAMPLE =
  'assetTag,kind,nominalVolumeMl,accuracyClass,graduationIntervalMl,material,makerSerial,location,notes\r\n' +
  'VF-100-017,volumetric-flask,100,A,,borosilicate-3-3,19-0412,"Room 2.14, shelf B",\r\n' +
  'PIP-25-004,one-mark-pipette,25,AS,,borosilicate-3-3,21.04-1187,Titration bench,\r\n' +
  'BUR-50-002,burette,50,A,0.1,borosilicate-3-3,,Titration bench,"Stopcock ""PTFE"" replaced 2025"\r\n';

export const IMPORT_DOC =
  'Body: CSV (RFC 4180, UTF-8, `Content-Type: text/csv`, at most 10 MB and ' +
  `${MAX_IMPORT_ROWS.toLocaleString('en')} rows). The first row names the columns, in any order: ` +
  IMPORT_COLUMNS.map((c) => `\`${c}\``).join(', ') +
  ` (required: ${REQUIRED_COLUMNS.map((c) => `\`${c}\``).join(', ')}). Each column means the same as the member of ` +
  '`POST /v1/vessels` and is checked by the same rules; an empty cell is a member left out, and spaces around a value are ignored. ' +
  'Fields with commas, quotes or line breaks are quoted, quotes inside doubled.\n\n' +
  'The whole file is checked before anything is written: on any problem nothing is stored and the answer is 422 with ' +
  '`errors: [{ row, field, reason }]` (row 1 is the header; at most ' +
  `${MAX_REPORTED_ERRORS} listed, \`totalErrors\` counts all), including asset tags repeated in the file or already registered. ` +
  'Otherwise every row is stored in one transaction, each with its own audit entry. Managers of the lab and administrators only.';

export const VesselImportQuerySchema = z.strictObject({
  labId: z.uuid().meta({ description: 'The lab all imported vessels belong to' }),
});
export class VesselImportQueryDto extends createZodDto(VesselImportQuerySchema) {}

export const VesselImportResultSchema = z
  .object({
    labId: z.uuid(),
    imported: z.number().int().meta({ description: 'Vessels stored' }),
    vessels: z.array(
      z.object({
        row: z.number().int().meta({ description: 'CSV record number (1 = header)' }),
        id: z.uuid(),
        assetTag: z.string(),
      }),
    ),
  })
  .meta({
    example: {
      labId: '3f6c2a5e-8d1b-4c7a-9e0f-1a2b3c4d5e6f',
      imported: 1,
      vessels: [{ row: 2, id: '0b8e6d0a-5f38-4a8e-b0d5-7c2f4e1a9b33', assetTag: 'VF-100-017' }],
    },
  });
export class VesselImportResultDto extends createZodDto(VesselImportResultSchema) {}
export type VesselImportResult = z.input<typeof VesselImportResultSchema>;

/** One refusal in a 422 answer. */
export interface ImportError {
  readonly row: number;
  readonly field: string;
  readonly reason: string;
}
