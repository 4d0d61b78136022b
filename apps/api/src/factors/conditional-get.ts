import type { FastifyReply } from 'fastify';

/** Callers may keep an answer for a minute, privately, and must revalidate after that (cheap with If-None-Match). */
export const FACTOR_CACHE_CONTROL = 'private, max-age=60, must-revalidate';

/**
 * If-None-Match against a strong ETag (RFC 9110 §13.1.2: weak comparison, so a
 * W/ prefix is ignored; `*` matches any current representation).
 */
export function noneMatch(ifNoneMatch: string | undefined, etag: string): boolean {
  if (!ifNoneMatch) return false;
  return ifNoneMatch
    .split(',')
    .map((t) => t.trim())
    .some((t) => t === '*' || t === etag || t === `W/${etag}`);
}

/**
 * Sends a cacheable JSON answer, or 304 when the caller already holds it.
 * Without an ETag (a nominal fallback) nothing is cached.
 */
export function sendConditional(reply: FastifyReply, body: unknown, etag: string | null, ifNoneMatch: string | undefined): void {
  if (etag === null) {
    void reply.header('cache-control', 'no-store').send(body);
    return;
  }
  void reply.header('etag', etag).header('cache-control', FACTOR_CACHE_CONTROL);
  if (noneMatch(ifNoneMatch, etag)) {
    void reply.status(304).send();
    return;
  }
  void reply.send(body);
}
