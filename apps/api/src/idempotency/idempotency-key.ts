import { createHash } from 'node:crypto';

import { DomainError } from '../common/problem/domain-error';

/** The request header, as documented and as named in problems. */
export const IDEMPOTENCY_HEADER = 'Idempotency-Key';

/**
 * Letters, digits and `. _ : ~ + / = -`, 1 to 128 characters: a UUID, a ULID or a
 * base64 token fits. The database holds the same rule (idempotency_keys_key_syntax).
 */
const KEY_SYNTAX = /^[A-Za-z0-9._:~+/=-]{1,128}$/;

const invalid = (reason: string) =>
  new DomainError('validation-failed', `The ${IDEMPOTENCY_HEADER} header ${reason}.`, [{ field: IDEMPOTENCY_HEADER, reason }]);

/**
 * The key of a request, or null when the header is absent. A structured-field string
 * (`"…"`, as the IETF draft writes it) is taken without its quotes.
 */
export function parseIdempotencyKey(header: string | string[] | undefined): string | null {
  if (header === undefined) return null;
  if (Array.isArray(header)) throw invalid('must be sent once');
  const quoted = /^"(.*)"$/.exec(header.trim());
  const key = quoted ? (quoted[1] ?? '') : header.trim();
  if (key.length === 0) throw invalid('must not be empty');
  if (key.length > 128) throw invalid('must be at most 128 characters');
  if (!KEY_SYNTAX.test(key)) throw invalid('may hold only letters, digits and . _ : ~ + / = -');
  return key;
}

/**
 * SHA-256 over what makes two requests the same: method, path with query, the If-Match
 * precondition when there is one, and the body as canonical JSON (members sorted), so a
 * client re-serialising the same body in another member order is still sending the same
 * request, while an update retried against another version is not.
 */
export function requestFingerprint(method: string, url: string, body: unknown, ifMatch?: string): Buffer {
  return createHash('sha256')
    .update(`${method.toUpperCase()}\n${url}\n`)
    .update(ifMatch === undefined ? '' : `if-match ${ifMatch.trim()}\n`)
    .update(body === undefined ? '' : canonicalJson(body, 0))
    .digest();
}

/** Deeper than any body this API takes; deeper ones are refused before they cost a deep recursion. */
const MAX_DEPTH = 64;

function canonicalJson(value: unknown, depth: number): string {
  if (depth > MAX_DEPTH) {
    throw new DomainError('validation-failed', `The body nests deeper than ${MAX_DEPTH} levels.`, [
      { field: 'body', reason: `nests deeper than ${MAX_DEPTH} levels` },
    ]);
  }
  if (typeof value === 'string') return JSON.stringify(value);
  if (Array.isArray(value)) return `[${value.map((v) => canonicalJson(v === undefined ? null : v, depth + 1)).join(',')}]`;
  if (value !== null && typeof value === 'object') {
    const members = Object.entries(value as Record<string, unknown>)
      .filter(([, v]) => v !== undefined)
      .sort(([a], [b]) => (a < b ? -1 : a > b ? 1 : 0));
    return `{${members.map(([k, v]) => `${JSON.stringify(k)}:${canonicalJson(v, depth + 1)}`).join(',')}}`;
  }
  return JSON.stringify(value) ?? 'null';
}
