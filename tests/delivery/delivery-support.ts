import { randomBytes } from 'node:crypto';
import { createServer, type IncomingHttpHeaders, type Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';

import type { PrismaClient } from '@registry/data';

import { DeliveryFanout } from '../../apps/api/src/deliveries/delivery-fanout';
import { DeliveryWorker } from '../../apps/api/src/deliveries/delivery-worker';
import type { RaisedNotice } from '../../apps/api/src/notices/notice-fanout';
import type { TestApp } from '../support/test-app';

/** A webhook key for tests (32 random bytes, base64), as an operator would set WEBHOOK_SECRET_KEY. */
export const TEST_WEBHOOK_KEY = randomBytes(32).toString('base64');

export interface NoticeSeed {
  readonly labId: string;
  readonly recipientIds: readonly string[];
  readonly eventKind?: 'due-soon' | 'overdue';
  readonly subjectLabel?: string;
  readonly dueOn?: string;
  readonly raisedAt?: Date;
}

/**
 * Raises a notice as the scheduler does: inserts it and its recipients, then
 * calls the fan-out in the same transaction. Returns the notice.
 */
export async function raiseNotice(t: TestApp, seed: NoticeSeed): Promise<RaisedNotice> {
  const prisma = t.database.prisma;
  const fanout = t.app.get(DeliveryFanout);
  return prisma.$transaction(async (tx) => {
    const notice = await tx.notice.create({
      data: {
        labId: seed.labId,
        eventKind: seed.eventKind ?? 'due-soon',
        subjectKind: 'vessel',
        subjectId: crypto.randomUUID(),
        subjectLabel: seed.subjectLabel ?? `PIP-25-${randomBytes(2).toString('hex').toUpperCase()}`,
        dueOn: new Date(`${seed.dueOn ?? '2026-12-15'}T00:00:00Z`),
        raisedAt: seed.raisedAt ?? new Date(),
        detail: { basis: 'interval', intervalDays: 365 },
      },
    });
    for (const personId of seed.recipientIds) await tx.noticeRecipient.create({ data: { noticeId: notice.id, personId } });
    const raised: RaisedNotice = {
      id: notice.id,
      labId: notice.labId,
      eventKind: notice.eventKind as RaisedNotice['eventKind'],
      subjectKind: 'vessel',
      subjectId: notice.subjectId,
      subjectLabel: notice.subjectLabel,
      personId: null,
      dueOn: notice.dueOn.toISOString().slice(0, 10),
      raisedAt: notice.raisedAt,
      detail: notice.detail as Record<string, unknown>,
      recipientIds: seed.recipientIds,
    };
    await fanout.onRaised(tx, [raised]);
    return raised;
  });
}

/** One pass of the delivery worker, as the service's loop would run it. */
export const runWorker = (t: TestApp) => t.app.get(DeliveryWorker).runOnce();

export interface Received {
  readonly headers: IncomingHttpHeaders;
  readonly body: string;
  readonly answered: number;
}

/** A local HTTP receiver answering each request with the next status of `script` (then the last one again). */
export async function startReceiver(script: readonly number[], options: { hangMs?: number } = {}) {
  const received: Received[] = [];
  const server: Server = createServer((req, res) => {
    const chunks: Buffer[] = [];
    req.on('data', (c: Buffer) => chunks.push(c));
    req.on('end', () => {
      const answered = script[Math.min(received.length, script.length - 1)] ?? 200;
      received.push({ headers: req.headers, body: Buffer.concat(chunks).toString('utf8'), answered });
      const answer = () => res.writeHead(answered, { 'content-type': 'text/plain' }).end('ok');
      if (options.hangMs) setTimeout(answer, options.hangMs);
      else answer();
    });
  });
  await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
  const { port } = server.address() as AddressInfo;
  return {
    url: `http://127.0.0.1:${port}/hooks/registry`,
    received,
    close: () =>
      new Promise<void>((resolve) => {
        server.closeAllConnections();
        server.close(() => resolve());
      }),
  };
}

type Verify = (secret: string, headers: Record<string, string | string[] | undefined>, rawBody: string, nowSeconds?: number) => boolean;

/**
 * The verification recipe exactly as the README documents it: the code block
 * after "### Verifying a webhook", evaluated as it stands.
 */
export function readmeRecipe(): Verify {
  const readme = readFileSync(join(__dirname, '..', '..', 'README.md'), 'utf8');
  const section = readme.split('### Verifying a webhook')[1];
  const code = section ? /```js\n([\s\S]*?)```/.exec(section)?.[1] : undefined;
  if (!code) throw new Error('README has no verification recipe');
  return new Function('require', `${code}\nreturn verifyRegistrySignature;`)(require) as Verify;
}

export async function deliveriesOf(prisma: PrismaClient, noticeId: string) {
  return prisma.noticeDelivery.findMany({ where: { noticeId }, orderBy: [{ channel: 'asc' }, { target: 'asc' }] });
}

/** A webhook straight into the database, its secret sealed under no key in use (it is never sent from). */
export async function seedWebhook(prisma: PrismaClient, labId: string, createdById: string) {
  const now = new Date();
  return prisma.webhook.create({
    data: {
      labId,
      url: 'https://samples.waterworks.example/hooks/registry',
      description: 'Sample-management system',
      eventKinds: ['due-soon', 'overdue'],
      secretSealed: new Uint8Array(randomBytes(64)),
      secretKeyRef: '0000000000000000',
      secretRotatedAt: now,
      createdById,
      createdAt: now,
      updatedAt: now,
    },
  });
}

/** A notice of the lab whose webhook delivery used its only attempt and failed. */
export async function seedFailedDelivery(prisma: PrismaClient, labId: string, createdById: string) {
  const webhook = await seedWebhook(prisma, labId, createdById);
  const notice = await prisma.notice.create({
    data: {
      labId,
      eventKind: 'overdue',
      subjectKind: 'vessel',
      subjectId: crypto.randomUUID(),
      subjectLabel: `VF-100-${randomBytes(2).toString('hex').toUpperCase()}`,
      dueOn: new Date('2026-11-30T00:00:00Z'),
    },
  });
  const now = new Date();
  return prisma.noticeDelivery.create({
    data: {
      noticeId: notice.id,
      labId,
      channel: 'webhook',
      webhookId: webhook.id,
      target: webhook.url,
      state: 'failed',
      attempts: 1,
      attemptLimit: 1,
      lastAttemptAt: now,
      lastStatusCode: 500,
      lastError: 'the endpoint answered 500',
      failedAt: now,
      createdAt: now,
    },
  });
}
