import { type FieldError, type ProblemCode } from './problem-catalog';

/**
 * The one error type services throw. It carries a stable problem code and
 * never an HTTP status: ProblemFilter turns it into RFC 9457 problem details.
 */
export class DomainError extends Error {
  override readonly name = 'DomainError';
  constructor(
    readonly code: ProblemCode,
    readonly detail: string,
    readonly errors?: readonly FieldError[],
    /** Extra members for the problem body (e.g. `validRange`). */
    readonly extensions: Record<string, unknown> = {},
    /** Response headers to add (e.g. Retry-After). */
    readonly headers: Record<string, string> = {},
  ) {
    super(detail);
  }
}
