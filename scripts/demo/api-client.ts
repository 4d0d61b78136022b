import type { NestFastifyApplication } from '@nestjs/platform-fastify';
import type { PrismaClient } from '@registry/data';

import { newSessionToken } from '../../apps/api/src/auth/tokens';
import type { ManualClock } from '../../apps/api/src/common/clock';

export interface Reply {
  readonly status: number;
  readonly body: Record<string, unknown>;
  readonly etag: string;
}

const SESSION_MS = 12 * 3_600_000;
/** A session is used again while its last request is this recent (well inside the idle timeout). */
const REUSE_MS = 20 * 60_000;

/**
 * The demo's way into the service: real HTTP requests through Fastify's
 * inject, each signed in as a demo person with a session that starts at the
 * demo clock's time (as if they had just signed in), so the service applies
 * every rule as it would have that day. A person's session serves their next
 * requests for a few minutes of demo time, as a signed-in person's would.
 */
export class DemoApi {
  private requests = 0;
  private readonly sessions = new Map<string, { token: string; lastUsed: number }>();

  constructor(
    private readonly app: NestFastifyApplication,
    private readonly prisma: PrismaClient,
    private readonly clock: ManualClock,
    private readonly people: ReadonlyMap<string, string>,
  ) {}

  get requestCount(): number {
    return this.requests;
  }

  /** Sends a request as the person; anything but `expected` stops the demo with the service's answer. */
  async send(email: string, method: 'GET' | 'POST' | 'PATCH', url: string, expected: number, body?: object, ifMatch?: string) {
    const token = await this.signIn(email);
    const headers: Record<string, string> = { authorization: `Bearer ${token}` };
    if (ifMatch !== undefined) headers['if-match'] = ifMatch;
    const res = await this.app.inject({ method, url, headers, ...(body === undefined ? {} : { payload: body }) });
    this.requests += 1;
    const reply: Reply = {
      status: res.statusCode,
      body: res.body ? (JSON.parse(res.body) as Record<string, unknown>) : {},
      etag: String(res.headers.etag ?? ''),
    };
    if (reply.status !== expected) {
      throw new Error(`${method} ${url} as ${email} at ${this.clock.now().toISOString()}: ${reply.status} ${res.body}`);
    }
    return reply;
  }

  private async signIn(email: string): Promise<string> {
    const personId = this.people.get(email);
    if (!personId) throw new Error(`no demo person ${email}`);
    const now = this.clock.now();
    const open = this.sessions.get(email);
    if (open && now.getTime() >= open.lastUsed && now.getTime() - open.lastUsed < REUSE_MS) {
      open.lastUsed = now.getTime();
      return open.token;
    }
    const { token, hash } = newSessionToken();
    await this.prisma.session.create({
      data: { personId, tokenHash: hash, createdAt: now, lastSeenAt: now, expiresAt: new Date(now.getTime() + SESSION_MS) },
    });
    this.sessions.set(email, { token, lastUsed: now.getTime() });
    return token;
  }
}
