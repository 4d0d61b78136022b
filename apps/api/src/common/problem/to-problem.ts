import { HttpException } from '@nestjs/common';
import { MetrologyInputError } from '@registry/metrology';
import { ZodValidationException } from 'nestjs-zod';
import { type ZodError } from 'zod';

import { DomainError } from './domain-error';
import { type FieldError, PROBLEM_CATALOG, type ProblemCode, type ProblemDocument, problemTypeUri } from './problem-catalog';

export interface ProblemResponse {
  readonly problem: ProblemDocument;
  readonly headers: Record<string, string>;
  /** True when the error is ours (5xx) and must be logged with its stack. */
  readonly unexpected: boolean;
}

interface RequestFacts {
  readonly url?: string;
  readonly requestId?: string;
}

/** Maps any thrown value to problem details. The only place that knows HTTP statuses. */
export function toProblem(error: unknown, request: RequestFacts): ProblemResponse {
  const classified = classify(error);
  const entry = PROBLEM_CATALOG[classified.code];
  const problem: ProblemDocument = {
    type: problemTypeUri(classified.code),
    title: entry.title,
    status: entry.status,
    detail: classified.detail ?? entry.description,
    ...(request.url ? { instance: request.url.split('?')[0] } : {}),
    code: classified.code,
    ...(request.requestId ? { requestId: request.requestId } : {}),
    ...(classified.errors?.length ? { errors: classified.errors } : {}),
    ...classified.extensions,
  };
  return { problem, headers: classified.headers ?? {}, unexpected: entry.status >= 500 && classified.code !== 'service-unavailable' };
}

interface Classified {
  code: ProblemCode;
  detail?: string;
  errors?: readonly FieldError[];
  extensions?: Record<string, unknown>;
  headers?: Record<string, string>;
}

function classify(error: unknown): Classified {
  if (error instanceof DomainError) {
    return {
      code: error.code,
      detail: error.detail,
      ...(error.errors ? { errors: error.errors } : {}),
      extensions: error.extensions,
      headers: error.headers,
    };
  }
  if (error instanceof ZodValidationException) return fromZod(error.getZodError() as ZodError);
  if (error instanceof MetrologyInputError) {
    return {
      code: 'unprocessable-quantity',
      detail: error.message,
      errors: [{ field: error.field, reason: error.reason }],
      ...(error.validRange ? { extensions: { validRange: error.validRange } } : {}),
    };
  }
  if (isDatabaseUnavailable(error))
    return { code: 'service-unavailable', detail: 'The database is unreachable; retry shortly.', headers: { 'retry-after': '2' } };
  const prismaCode = (error as { code?: unknown })?.code;
  if (prismaCode === 'P2002') return { code: 'conflict', detail: 'A record with the same unique value already exists.' };
  if (prismaCode === 'P2025') return { code: 'not-found' };
  const fastify = fromFastify(error);
  if (fastify) return fastify;
  if (error instanceof HttpException) return fromHttpException(error);
  return { code: 'internal-error' };
}

export function fromZod(error: ZodError): Classified {
  const errors = error.issues.flatMap((issue) => {
    const base = issue.path.map(String);
    // One entry per unknown member, at its own path, so a client sees exactly what to remove.
    if (issue.code === 'unrecognized_keys')
      return issue.keys.map((key) => ({ field: [...base, key].join('.'), reason: 'is not a known field' }));
    return [{ field: base.join('.') || '(body)', reason: issue.message }];
  });
  return { code: 'validation-failed', detail: `${errors.length} field(s) failed validation.`, errors };
}

function fromHttpException(error: HttpException): Classified {
  const status = error.getStatus();
  if (status === 400 && /JSON/.test(error.message)) return { code: 'malformed-body', detail: 'The body is not valid JSON.' };
  if (status === 404) return { code: 'route-not-found', detail: error.message.replace(/^Cannot/, 'No endpoint for') };
  const byStatus: Partial<Record<number, ProblemCode>> = {
    400: 'validation-failed',
    401: 'unauthenticated',
    403: 'forbidden',
    405: 'method-not-allowed',
    409: 'conflict',
    412: 'precondition-failed',
    413: 'payload-too-large',
    415: 'unsupported-media-type',
    422: 'unprocessable-quantity',
    428: 'precondition-required',
    429: 'too-many-requests',
    503: 'service-unavailable',
  };
  const code = byStatus[status];
  return code ? { code, detail: error.message } : { code: 'internal-error' };
}

function fromFastify(error: unknown): Classified | null {
  const e = error as { code?: string; statusCode?: number; message?: string } | null;
  switch (e?.code) {
    case 'FST_ERR_CTP_BODY_TOO_LARGE':
      return { code: 'payload-too-large', detail: 'The request body exceeds the size limit.' };
    case 'FST_ERR_CTP_INVALID_MEDIA_TYPE':
      return { code: 'unsupported-media-type', detail: e.message ?? 'Unsupported Content-Type.' };
    case 'FST_ERR_CTP_INVALID_JSON_BODY':
      return { code: 'malformed-body', detail: 'The body is not valid JSON.' };
    case 'FST_ERR_CTP_EMPTY_JSON_BODY':
      return { code: 'malformed-body', detail: 'The body is empty but Content-Type is application/json.' };
    case 'FST_ERR_CTP_INVALID_CONTENT_LENGTH':
      return { code: 'malformed-body', detail: 'Content-Length does not match the body.' };
    case 'FST_ERR_BAD_URL':
      return { code: 'malformed-request', detail: 'The URL path is not valid percent-encoding.' };
    case 'FST_ERR_MAX_PARAM_LENGTH':
      return {
        code: 'validation-failed',
        detail: 'A path parameter is longer than any identifier.',
        errors: [{ field: '(path)', reason: 'a path parameter has more than 100 characters' }],
      };
  }
  if (e?.statusCode === 400 && (e instanceof SyntaxError || /JSON/i.test(e.message ?? ''))) {
    return { code: 'malformed-body', detail: 'The body is not valid JSON.' };
  }
  if (e?.statusCode === 413) return { code: 'payload-too-large' };
  if (e?.statusCode === 415) return { code: 'unsupported-media-type' };
  return null;
}

const UNAVAILABLE_CODES = new Set([
  'ECONNREFUSED',
  'ECONNRESET',
  'ETIMEDOUT',
  'EPIPE',
  '53300',
  '57P01',
  '57P02',
  '57P03',
  '08000',
  '08001',
  '08003',
  '08006',
  'P1001',
  'P1002',
  'P1017',
]);

/** What the Prisma pg adapter calls a lost or refused connection (its `cause.kind`). */
const UNAVAILABLE_KINDS = new Set(['DatabaseNotReachable', 'ConnectionClosed', 'SocketTimeout', 'TooManyConnections']);

/**
 * The pool's and the driver's words for a database that is gone or does not answer: our own statement bound
 * (`StatementTimeoutError`), and Prisma's P2028 when no connection came within a transaction's `maxWait`.
 */
const UNAVAILABLE_MESSAGE =
  /(timeout exceeded when trying to connect|Connection terminated|connect ECONNREFUSED|Can't reach database server|is not queryable|Database statement timed out|Unable to start a transaction in the given time)/i;

type ErrorLike = { code?: unknown; kind?: unknown; cause?: unknown; message?: unknown; meta?: { driverAdapterError?: unknown } };

/**
 * Connection-level failures: the database went away, not a bug in the request.
 * Follows `cause` and, for Prisma's own errors (P2039 and friends), the driver
 * adapter's error in `meta.driverAdapterError`, where the PostgreSQL code lives.
 */
export function isDatabaseUnavailable(error: unknown): boolean {
  const pending: unknown[] = [error];
  for (let seen = 0; pending.length > 0 && seen < 10; seen++) {
    const e = pending.shift() as ErrorLike | null | undefined;
    if (!e || typeof e !== 'object') continue;
    if (typeof e.code === 'string' && UNAVAILABLE_CODES.has(e.code)) return true;
    if (typeof e.kind === 'string' && UNAVAILABLE_KINDS.has(e.kind)) return true;
    if (typeof e.message === 'string' && UNAVAILABLE_MESSAGE.test(e.message)) return true;
    pending.push(e.cause, e.meta?.driverAdapterError);
  }
  return false;
}
