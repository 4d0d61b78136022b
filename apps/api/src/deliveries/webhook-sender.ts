import { request as httpRequest } from 'node:http';
import { request as httpsRequest } from 'node:https';

import type { SecretBox } from '../webhooks/secret-box';
import { assertDeliverable, guardedLookup } from '../webhooks/webhook-targets';
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

/** How an attempt is made: within the timeout, and whether loopback and private addresses may be reached. */
export interface SendOptions {
  readonly timeoutMs: number;
  readonly allowPrivateTargets: boolean;
}

/**
 * One attempt: POST the signed JSON to the webhook's current URL, within the
 * timeout, without following redirects. Any 2xx answer is a delivery. Unless
 * private targets are allowed, the address connected to must not be a
 * loopback, private or reserved one (webhook-targets.ts), whatever the name
 * resolved to at registration.
 */
export async function sendWebhook(d: ClaimedDelivery, box: SecretBox | null, now: Date, options: SendOptions): Promise<SendResult> {
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
  const headers = {
    'content-type': 'application/json',
    'user-agent': 'calibration-registry-webhooks/1',
    [TIMESTAMP_HEADER]: String(timestamp),
    [SIGNATURE_HEADER]: signatureOf(secret, timestamp, body),
    [DELIVERY_HEADER]: d.id,
    [EVENT_HEADER]: d.eventKind,
  };
  try {
    if (!options.allowPrivateTargets) assertDeliverable(d.webhookUrl);
    const status = await post(d.webhookUrl, headers, body, options);
    if (status >= 200 && status < 300) return { ok: true, statusCode: status, error: null };
    return {
      ok: false,
      statusCode: status,
      error: `the endpoint answered ${status}${status < 400 ? ' (redirects are not followed)' : ''}`,
    };
  } catch (error) {
    return { ok: false, statusCode: null, error: describeSendError(error, options.timeoutMs) };
  }
}

/** POSTs the body and resolves with the answer's status once its headers arrive (the rest is discarded). */
function post(url: string, headers: Record<string, string>, body: string, options: SendOptions): Promise<number> {
  const send = url.startsWith('https:') ? httpsRequest : httpRequest;
  return new Promise((resolve, reject) => {
    const req = send(
      url,
      {
        method: 'POST',
        headers: { ...headers, 'content-length': String(Buffer.byteLength(body)) },
        signal: AbortSignal.timeout(options.timeoutMs),
        // A connection of its own each time: a kept-alive one from the shared agent would skip the guarded lookup.
        agent: false,
        ...(options.allowPrivateTargets ? {} : { lookup: guardedLookup }),
      },
      (res) => {
        // A body still arriving when the timeout aborts the request errors here: nothing waits for it.
        res.on('error', () => undefined);
        res.resume();
        resolve(res.statusCode ?? 0);
      },
    );
    req.on('error', reject);
    req.end(body);
  });
}

function describeSendError(error: unknown, timeoutMs: number): string {
  const e = error as { name?: string; message?: string; code?: string; cause?: { name?: string } };
  if (e.name === 'TimeoutError' || e.name === 'AbortError' || e.cause?.name === 'TimeoutError') return `no answer within ${timeoutMs} ms`;
  if (e.name === 'PrivateTargetError') return `refused: ${e.message} (WEBHOOK_PRIVATE_TARGETS=allow permits it)`;
  return e.code ? `could not connect: ${e.code}` : `could not send: ${e.message ?? String(error)}`;
}
