import type { SecretBox } from '../webhooks/secret-box';
import { DELIVERY_HEADER, EVENT_HEADER, SIGNATURE_HEADER, signatureOf, TIMESTAMP_HEADER } from '../webhooks/webhook-signature';
import type { ClaimedDelivery } from './delivery.repository';

export interface SendResult {
  readonly ok: boolean;
  readonly statusCode: number | null;
  readonly error: string | null;
  /** Retrying cannot help (the webhook was disabled or removed): fail at once. */
  readonly final?: boolean;
}

/** The JSON a webhook receives: the delivery's id (the same on every attempt) and the notice. */
export function webhookPayload(d: ClaimedDelivery, sentAt: Date): string {
  return JSON.stringify({
    deliveryId: d.id,
    event: d.eventKind,
    sentAt: sentAt.toISOString(),
    notice: {
      id: d.noticeId,
      labId: d.labId,
      labCode: d.labCode,
      eventKind: d.eventKind,
      subjectKind: d.subjectKind,
      subjectId: d.subjectId,
      subjectLabel: d.subjectLabel,
      personId: d.personId,
      dueOn: d.dueOn,
      raisedAt: new Date(d.raisedAt).toISOString(),
      detail: d.detail,
    },
  });
}

/**
 * One attempt: POST the signed JSON to the webhook's current URL, within the
 * timeout, without following redirects. Any 2xx answer is a delivery.
 */
export async function sendWebhook(d: ClaimedDelivery, box: SecretBox | null, now: Date, timeoutMs: number): Promise<SendResult> {
  if (d.webhookUrl === null || d.secretSealed === null || d.secretKeyRef === null || d.webhookId === null) {
    return { ok: false, statusCode: null, error: 'the webhook no longer exists', final: true };
  }
  if (!d.webhookEnabled) return { ok: false, statusCode: null, error: 'the webhook is disabled', final: true };
  if (box === null) return { ok: false, statusCode: null, error: 'WEBHOOK_SECRET_KEY is not set: deliveries cannot be signed' };
  let secret: string;
  try {
    secret = box.open(d.secretSealed, d.secretKeyRef, d.webhookId);
  } catch (error) {
    return { ok: false, statusCode: null, error: (error as Error).message };
  }
  const body = webhookPayload(d, now);
  const timestamp = Math.floor(now.getTime() / 1000);
  try {
    const res = await fetch(d.webhookUrl, {
      method: 'POST',
      redirect: 'manual',
      signal: AbortSignal.timeout(timeoutMs),
      headers: {
        'content-type': 'application/json',
        'user-agent': 'calibration-registry-webhooks/1',
        [TIMESTAMP_HEADER]: String(timestamp),
        [SIGNATURE_HEADER]: signatureOf(secret, timestamp, body),
        [DELIVERY_HEADER]: d.id,
        [EVENT_HEADER]: d.eventKind,
      },
      body,
    });
    await res.body?.cancel().catch(() => undefined);
    if (res.status >= 200 && res.status < 300) return { ok: true, statusCode: res.status, error: null };
    return {
      ok: false,
      statusCode: res.status,
      error: `the endpoint answered ${res.status}${res.status < 400 ? ' (redirects are not followed)' : ''}`,
    };
  } catch (error) {
    return { ok: false, statusCode: null, error: describeFetchError(error, timeoutMs) };
  }
}

function describeFetchError(error: unknown, timeoutMs: number): string {
  const e = error as { name?: string; message?: string; cause?: { code?: string; message?: string } };
  if (e.name === 'TimeoutError' || e.name === 'AbortError') return `no answer within ${timeoutMs} ms`;
  const cause = e.cause?.code ?? e.cause?.message;
  return cause ? `could not connect: ${cause}` : `could not send: ${e.message ?? String(error)}`;
}
