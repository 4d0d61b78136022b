/**
 * Every problem type the API can answer with (RFC 9457). The `type` URI of a
 * problem is `/problems/<code>`, served by ProblemTypesController, so a client
 * can look up what a code means. Codes are stable: never rename one.
 */
export const PROBLEM_CATALOG = {
  'validation-failed': {
    status: 400,
    title: 'The request is not valid',
    description: 'One or more fields are missing or invalid; see `errors` for each field and the reason.',
  },
  'malformed-body': { status: 400, title: 'The request body is not valid JSON', description: 'The body could not be parsed as JSON.' },
  'malformed-request': {
    status: 400,
    title: 'The request is not valid HTTP',
    description: 'The request line, a header or the percent-encoding of the URL could not be read.',
  },
  unauthenticated: {
    status: 401,
    title: 'Sign-in required',
    description: 'The request carries no valid bearer token or service credential.',
  },
  'password-change-required': {
    status: 403,
    title: 'Password change required',
    description: 'You signed in with a one-time password; replace it with POST /v1/me/password before anything else.',
  },
  forbidden: { status: 403, title: 'Not allowed', description: 'The caller is known but may not do this.' },
  'four-eyes': {
    status: 403,
    title: 'A second person must review',
    description:
      'The lab requires that a calibration is approved or returned by someone other than the person who performed or entered it.',
  },
  'not-found': { status: 404, title: 'Not found', description: 'No such resource, or not visible to the caller.' },
  'route-not-found': { status: 404, title: 'No such route', description: 'No endpoint matches this method and path; see /docs.' },
  'method-not-allowed': { status: 405, title: 'Method not allowed', description: 'The path exists but not for this method.' },
  conflict: {
    status: 409,
    title: 'Conflict with the current state',
    description: 'The request conflicts with existing data (for example a duplicate identifier).',
  },
  'invalid-state': {
    status: 409,
    title: 'Not allowed in the record’s current state',
    description:
      'The record’s state does not allow this action (for example a calibration that was submitted can no longer be edited); `state` names the current one.',
  },
  'precondition-failed': {
    status: 412,
    title: 'The resource has changed',
    description: 'The If-Match version is stale; read the resource again and retry.',
  },
  'idempotency-key-in-use': {
    status: 409,
    title: 'A request with this Idempotency-Key is still running',
    description:
      'Another request of yours with the same Idempotency-Key has not finished yet; retry after the Retry-After seconds to get its response.',
  },
  'idempotency-key-reused': {
    status: 422,
    title: 'The Idempotency-Key was used for another request',
    description: 'You sent this Idempotency-Key before with another method, path or body; use a new key for a new request.',
  },
  'request-timeout': {
    status: 408,
    title: 'Request not completed in time',
    description: 'The request line and headers did not arrive in time; send the request again.',
  },
  'payload-too-large': { status: 413, title: 'Request body too large', description: 'The body exceeds the configured limit.' },
  'unsupported-media-type': { status: 415, title: 'Unsupported media type', description: 'Send JSON with Content-Type: application/json.' },
  'unprocessable-quantity': {
    status: 422,
    title: 'A quantity is outside what the method allows',
    description: 'A value is impossible or outside the validity range of the published method; see `errors`.',
  },
  'traceability-violation': {
    status: 422,
    title: 'Traceability rules are not met',
    description:
      'An instrument or item used was not fit for use at the time of the work; `violations` lists each rule broken as { rule, itemId, detail, exceptionAllowed }.',
  },
  'no-factor': {
    status: 404,
    title: 'No factor on record',
    description:
      'The person has no calibration on record for this vessel (or none was in force at the instant asked). Ask for the nominal fallback explicitly if a nominal value will do.',
  },
  'factor-expired': {
    status: 409,
    title: 'The factor has expired',
    description:
      'The person’s factor for this vessel is past its validity (`validUntil` says when it ended): the vessel must be recalibrated by that person before the factor is used again.',
  },
  'vessel-not-in-service': {
    status: 409,
    title: 'The vessel is not in service',
    description:
      'The vessel is quarantined or retired (`vesselStatus`): none of its factors may be used, and no nominal fallback is given.',
  },
  'person-not-active': {
    status: 409,
    title: 'The person is disabled',
    description:
      'The person named is disabled in the registry: their current factors may not be used, and no nominal fallback is given. Questions about an instant in the past (`at`) are still answered.',
  },
  'person-not-member': {
    status: 422,
    title: 'The person is not a member of the vessel’s lab',
    description:
      'The person named (by id, email or the lab’s external reference) is not a member of the lab that owns the vessel, so no factor of theirs can apply to it.',
  },
  'precondition-required': {
    status: 428,
    title: 'If-Match required',
    description: 'Updates need the If-Match header with the version read.',
  },
  'too-many-requests': { status: 429, title: 'Too many requests', description: 'Slow down and retry after the time given in Retry-After.' },
  'headers-too-large': {
    status: 431,
    title: 'Request headers too large',
    description: 'The request line and headers exceed 16 KiB (usually a very long query string); shorten them.',
  },
  'internal-error': {
    status: 500,
    title: 'Internal error',
    description: 'An unexpected error occurred; quote the request id when reporting it.',
  },
  'webhooks-not-configured': {
    status: 409,
    title: 'Webhooks are not configured on this service',
    description:
      'Webhook signing secrets are stored encrypted under WEBHOOK_SECRET_KEY, which this service does not have; an operator sets it (32 random bytes in base64) and restarts.',
  },
  'service-unavailable': {
    status: 503,
    title: 'Service temporarily unavailable',
    description: 'A dependency (usually the database) is unreachable; retry shortly.',
  },
} as const satisfies Record<string, { status: number; title: string; description: string }>;

export type ProblemCode = keyof typeof PROBLEM_CATALOG;

export const problemTypeUri = (code: ProblemCode): string => `/problems/${code}`;

/** One failing field: a JSON pointer-like dotted path and a human reason. */
export interface FieldError {
  readonly field: string;
  readonly reason: string;
}

/** The body of an `application/problem+json` response. */
export interface ProblemDocument {
  readonly type: string;
  readonly title: string;
  readonly status: number;
  readonly detail?: string;
  readonly instance?: string;
  readonly code: ProblemCode;
  readonly requestId?: string;
  readonly errors?: readonly FieldError[];
  readonly [extension: string]: unknown;
}
