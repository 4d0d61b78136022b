import { createHmac, randomBytes, timingSafeEqual } from 'node:crypto';

/*
 * How a webhook delivery is signed. The README's "Verifying a webhook" section
 * shows the receiving side; tests/delivery verifies deliveries with that recipe.
 */

/** Unix time in seconds when the request was signed. */
export const TIMESTAMP_HEADER = 'registry-timestamp';
/** `sha256=<hex>`: HMAC-SHA256 with the endpoint's secret over `<timestamp>.<body>`. */
export const SIGNATURE_HEADER = 'registry-signature';
/** The delivery's id: the same on every attempt and redelivery, so a receiver can drop repeats. */
export const DELIVERY_HEADER = 'registry-delivery';
/** The notice's event kind (`due-soon`, `overdue`). */
export const EVENT_HEADER = 'registry-event';

/** Signing secrets: `rwh_` and 256 random bits. */
export const SECRET_PREFIX = 'rwh_';

export function newWebhookSecret(): string {
  return `${SECRET_PREFIX}${randomBytes(32).toString('base64url')}`;
}

export function signatureOf(secret: string, timestamp: number, body: string): string {
  return `sha256=${createHmac('sha256', secret).update(`${timestamp}.${body}`, 'utf8').digest('hex')}`;
}

/** The receiving side's check (as in the README): right signature, and a timestamp within `toleranceS` of now. */
export function verifySignature(
  secret: string,
  headers: { timestamp: string; signature: string },
  body: string,
  nowS: number,
  toleranceS = 300,
): boolean {
  const timestamp = Number(headers.timestamp);
  if (!Number.isInteger(timestamp) || Math.abs(nowS - timestamp) > toleranceS) return false;
  const expected = Buffer.from(signatureOf(secret, timestamp, body));
  const given = Buffer.from(headers.signature);
  return expected.length === given.length && timingSafeEqual(expected, given);
}
