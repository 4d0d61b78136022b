import { createZodValidationPipe } from 'nestjs-zod';
import { type ZodError } from 'zod';

import { DomainError } from './problem/domain-error';
import { fromZod } from './problem/to-problem';

/** Validates every body, query and param against its zod DTO; failures become `validation-failed` problems. */
export const RegistryValidationPipe = createZodValidationPipe({
  createValidationException: (error: unknown) => {
    const { detail, errors } = fromZod(error as ZodError);
    return new DomainError('validation-failed', detail ?? 'Invalid request.', errors);
  },
});
