import { Writable } from 'node:stream';

import type { NestFastifyApplication } from '@nestjs/platform-fastify';
import { createDatabase, type Database, type PrismaClient } from '@registry/data';

import { createApp } from '../../apps/api/src/app.factory';
import { ManualClock } from '../../apps/api/src/common/clock';
import { parseConfig } from '../../apps/api/src/config/config.schema';
import { createLogger } from '../../apps/api/src/logging';
import { DueScheduler } from '../../apps/api/src/scheduler/due-scheduler';
import { bearer, seedCast, sessionFor } from '../support/factories';
import { startTestApp, type TestApp } from '../support/test-app';

export const DAY_MS = 86_400_000;
/** 08:00 in Vienna on 1 December 2026. */
export const START = new Date('2026-12-01T07:00:00Z');
export const day = (iso: string) => new Date(`${iso}T00:00:00Z`);

/** The app on its own database with a movable clock, the cast of lab A (Europe/Vienna) and lab B. */
export async function schedulingWorld() {
  const clock = new ManualClock(START);
  const t = await startTestApp({}, { clock });
  const prisma = t.database.prisma;
  const cast = await seedCast(prisma);
  const scheduler = t.app.get(DueScheduler);
  type Who = keyof typeof cast.people;
  /** A session of the person that is fresh at the clock's time (the clock jumps days and months). */
  const as = async (who: Who | { id: string }) => sessionFor(prisma, typeof who === 'string' ? cast.people[who].id : who.id, clock.now());
  return {
    t,
    prisma,
    cast,
    clock,
    scheduler,
    as,
    get: async (path: string, who: Who | { id: string }, query: Record<string, string> = {}) =>
      t.http
        .get(path)
        .set(bearer(await as(who)))
        .query(query),
    post: async (path: string, who: Who | { id: string }, body: object = {}) =>
      t.http
        .post(path)
        .set(bearer(await as(who)))
        .send(body),
  };
}
export type SchedulingWorld = Awaited<ReturnType<typeof schedulingWorld>>;

export interface Instance {
  readonly app: NestFastifyApplication;
  readonly database: Database;
  readonly scheduler: DueScheduler;
  close(): Promise<void>;
}

/**
 * A second instance of the service on the same database as `t` (its own pool and clock), as another process would run;
 * `env` adds configuration (give it the same as `t`'s where the instances must agree, e.g. SMTP for e-mail deliveries).
 */
export async function anotherInstance(t: TestApp, clock: ManualClock, env: Record<string, string> = {}): Promise<Instance> {
  const config = parseConfig({
    NODE_ENV: 'test',
    LOG_LEVEL: 'warn',
    WEBHOOK_PRIVATE_TARGETS: 'allow',
    ...env,
    DATABASE_URL: t.testDatabase.appUrl,
  });
  const sink = new Writable({ write: (_c, _e, done) => done() });
  const database = createDatabase({ databaseUrl: t.testDatabase.appUrl, poolMax: 5 });
  const app = await createApp({ config, database, logger: createLogger(config, sink), clock });
  await app.init();
  return {
    app,
    database,
    scheduler: app.get(DueScheduler),
    async close() {
      await app.close();
      await database.close();
    },
  };
}

export async function noticesOf(prisma: PrismaClient, subjectId: string) {
  return prisma.notice.findMany({ where: { subjectId }, orderBy: { raisedAt: 'asc' }, include: { recipients: true } });
}
