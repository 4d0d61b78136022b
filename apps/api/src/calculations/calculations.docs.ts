import { type Type, applyDecorators } from '@nestjs/common';
import { ApiBody, type ApiBodyOptions, ApiResponse } from '@nestjs/swagger';
import type { ExamplesObject } from '@nestjs/swagger/dist/interfaces/open-api-spec.interface';

/** Shown on endpoints whose result may decide whether equipment is used. */
export const CAUTION_LINE =
  '**Caution.** This result supports, and does not replace, the laboratory’s quality system: ' +
  'whether the equipment may be used is decided by a qualified person.';

export const UNPROCESSABLE =
  'Quantities are JSON numbers or decimal strings (at most 40 characters; 0 or a magnitude from 1e-15 to 1e15) and come back ' +
  'as decimal strings in plain notation: computed values to 12 significant digits, inputs echoed exactly. ' +
  'A malformed body is a 400 `validation-failed` problem listing each field and reason; a value outside what the ' +
  'published method allows is a 422 `unprocessable-quantity` problem naming the field (dotted path) and `validRange`.';

/** The request body with its named examples, and the two problem responses every calculation can give. */
export function ApiExampleBody(type: Type<unknown>, examples: ExamplesObject): MethodDecorator {
  // Swagger copies `examples` next to the generated schema; its option type only lists it for raw schemas.
  const body = { type, required: true, examples } as ApiBodyOptions;
  return applyDecorators(
    ApiBody(body),
    ApiResponse({ status: 400, description: 'validation-failed: a field is missing, of the wrong type, unknown or malformed' }),
    ApiResponse({ status: 422, description: 'unprocessable-quantity: a value is impossible or outside the validity range of the method' }),
  );
}
