import { randomUUID } from 'node:crypto';
import type { IncomingMessage } from 'node:http';

const SAFE_ID = /^[A-Za-z0-9._:-]{1,128}$/;

/** Honours a caller's X-Request-Id when it is short and plain, otherwise makes one. */
export function requestIdFor(req: IncomingMessage): string {
  const given = req.headers['x-request-id'];
  const value = Array.isArray(given) ? given[0] : given;
  return value && SAFE_ID.test(value) ? value : randomUUID();
}
