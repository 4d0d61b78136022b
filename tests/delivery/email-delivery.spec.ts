import type { AddressInfo } from 'node:net';

import { SMTPServer } from 'smtp-server';

import { ManualClock } from '../../apps/api/src/common/clock';
import { bearer, seedCast, seedPerson } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';
import { deliveriesOf, raiseNotice, runWorker } from './delivery-support';

/*
 * E-mail through a real SMTP conversation with an in-process server: one
 * message per recipient, plain text and HTML, the subject naming the item and
 * its due date, the caution at the foot.
 */

interface Message {
  readonly mailFrom: string;
  readonly rcptTo: string[];
  readonly raw: string;
}

/** Quoted-printable as nodemailer writes it (soft breaks, =XX bytes), back to text. */
function decodeQuotedPrintable(s: string): string {
  const bytes: number[] = [];
  const text = s.replace(/=\r?\n/g, '');
  for (let i = 0; i < text.length; i++) {
    const hex = text[i] === '=' ? /^[0-9A-F]{2}$/.exec(text.slice(i + 1, i + 3)) : null;
    if (hex) {
      bytes.push(parseInt(hex[0], 16));
      i += 2;
    } else bytes.push(...Buffer.from(text[i]!, 'utf8'));
  }
  return Buffer.from(bytes).toString('utf8');
}

/** The decoded body of the MIME part with this content type. */
function part(raw: string, type: 'text/plain' | 'text/html'): string {
  const boundary = /boundary="?([^";\r\n]+)"?/.exec(raw)?.[1];
  const found = (boundary ? raw.split(`--${boundary}`) : []).find((p) => p.includes(`Content-Type: ${type}`));
  if (found === undefined) throw new Error(`no ${type} part`);
  const headerEnd = found.indexOf('\r\n\r\n');
  const headers = found.slice(0, headerEnd);
  const body = found.slice(headerEnd + 4).replace(/\r\n$/, '');
  if (/quoted-printable/i.test(headers)) return decodeQuotedPrintable(body);
  if (/base64/i.test(headers)) return Buffer.from(body.replace(/\s/g, ''), 'base64').toString('utf8');
  return body;
}

describe('notices by e-mail', () => {
  let t: TestApp;
  let smtp: SMTPServer;
  const messages: Message[] = [];
  const clock = new ManualClock(new Date(Math.floor(Date.now() / 1000) * 1000));

  beforeAll(async () => {
    smtp = new SMTPServer({
      authOptional: true,
      disabledCommands: ['STARTTLS', 'AUTH'],
      logger: false,
      onRcptTo(address, _session, callback) {
        if (address.address.startsWith('bounce-')) callback(Object.assign(new Error('Mailbox unavailable'), { responseCode: 550 }));
        else callback();
      },
      onData(stream, session, callback) {
        const chunks: Buffer[] = [];
        stream.on('data', (c: Buffer) => chunks.push(c));
        stream.on('end', () => {
          const from = session.envelope.mailFrom;
          messages.push({
            mailFrom: from ? from.address : '',
            rcptTo: session.envelope.rcptTo.map((r) => r.address),
            raw: Buffer.concat(chunks).toString('utf8'),
          });
          callback();
        });
      },
    });
    await new Promise<void>((resolve) => smtp.listen(0, '127.0.0.1', resolve));
    const { port } = smtp.server.address() as AddressInfo;
    t = await startTestApp(
      {
        SMTP_URL: `smtp://127.0.0.1:${port}`,
        MAIL_FROM: 'Calibration registry <registry@waterworks.example>',
        DELIVERY_TIMEOUT_MS: '5000',
      },
      { clock },
    );
  }, 60_000);
  afterAll(async () => {
    await t.close();
    await new Promise<void>((resolve) => smtp.close(() => resolve()));
  });

  it('sends one message per active recipient, plain text and HTML, naming the item and its due date', async () => {
    const prisma = t.database.prisma;
    const cast = await seedCast(prisma);
    const second = await seedPerson(prisma, {
      email: 'hedda.hoffmann@waterworks.example',
      displayName: 'Hedda Hoffmann',
      labs: [{ labId: cast.lab.id, role: 'manager' }],
    });
    const disabled = await seedPerson(prisma, {
      displayName: 'Former Manager',
      status: 'disabled',
      labs: [{ labId: cast.lab.id, role: 'manager' }],
    });
    messages.length = 0;

    const notice = await raiseNotice(t, {
      labId: cast.lab.id,
      recipientIds: [cast.people.manager.id, second.id, disabled.id],
      subjectLabel: 'BUR-50-<007>',
      dueOn: '2026-12-15',
    });
    const rows = await deliveriesOf(prisma, notice.id);
    expect(rows.map((r) => [r.channel, r.target]).sort()).toEqual(
      [
        ['email', cast.people.manager.email],
        ['email', second.email],
      ].sort(),
    );

    expect(await runWorker(t)).toMatchObject({ claimed: 2, delivered: 2 });
    expect(messages).toHaveLength(2);
    for (const recipient of [cast.people.manager, second]) {
      const mine = messages.filter((m) => m.rcptTo.includes(recipient.email));
      expect(mine).toHaveLength(1);
      const m = mine[0]!;
      expect(m.rcptTo).toEqual([recipient.email]);
      expect(m.mailFrom).toBe('registry@waterworks.example');
      expect(m.raw).toMatch(new RegExp(`^To: ${recipient.email}\\r$`, 'm'));
      expect(m.raw).toMatch(/^From: Calibration registry <registry@waterworks\.example>\r$/m);
      expect(m.raw).toMatch(new RegExp(`^Subject: Due soon: BUR-50-<007> is due on 2026-12-15 \\(${cast.lab.code}\\)\\r$`, 'm'));
      expect(m.raw).toMatch(/^Content-Type: multipart\/alternative/m);

      const text = part(m.raw, 'text/plain');
      expect(text).toContain(`Hello ${recipient.displayName},`);
      expect(text).toContain(`BUR-50-<007> in Drinking-water chemistry (${cast.lab.code}) falls due on 2026-12-15`);
      expect(text).toContain(`Notice ${notice.id}`);
      expect(text).toContain('supports, and does not replace, the laboratory’s quality system');

      const html = part(m.raw, 'text/html');
      expect(html).toContain('BUR-50-&lt;007&gt;');
      expect(html).not.toContain('<007>');
      expect(html).toContain('qualified person decides');
    }
    expect(messages.some((m) => m.raw.includes('Former Manager'))).toBe(false);

    const log = await t.http.get(`/v1/labs/${cast.lab.id}/deliveries`).query({ channel: 'email' }).set(bearer(cast.tokens.manager));
    expect(log.status).toBe(200);
    expect(log.body.items).toHaveLength(2);
    for (const d of log.body.items)
      expect(d).toMatchObject({ state: 'delivered', attempts: 1, lastError: null, deliveredAt: clock.now().toISOString() });
  });

  it('keeps a refused recipient pending with the server’s answer, and tries again later', async () => {
    const prisma = t.database.prisma;
    const cast = await seedCast(prisma);
    const bouncing = await seedPerson(prisma, { email: 'bounce-lab@waterworks.example', labs: [{ labId: cast.lab.id, role: 'manager' }] });
    messages.length = 0;
    const notice = await raiseNotice(t, { labId: cast.lab.id, recipientIds: [bouncing.id], eventKind: 'overdue', dueOn: '2026-11-20' });
    await runWorker(t);
    expect(messages).toHaveLength(0);
    const [row] = await deliveriesOf(prisma, notice.id);
    expect(row).toMatchObject({ channel: 'email', state: 'pending', attempts: 1 });
    expect(row!.lastError).toMatch(/^SMTP: 550 /);
    expect(row!.nextAttemptAt!.getTime()).toBeGreaterThan(clock.now().getTime());
  });
});
