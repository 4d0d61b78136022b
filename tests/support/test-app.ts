import 'reflect-metadata';

import { Writable } from 'node:stream';

import type { NestFastifyApplication } from '@nestjs/platform-fastify';
import { createDatabase, type Database } from '@registry/data';
import request from 'supertest';
import type TestAgent from 'supertest/lib/agent';

import { createApp } from '../../apps/api/src/app.factory';
import type { Clock } from '../../apps/api/src/common/clock';
import { type EnvInput, parseConfig } from '../../apps/api/src/config/config.schema';
import { createLogger } from '../../apps/api/src/logging';
import { createTestDatabase, type TestDatabase } from './test-database';

export interface TestApp {
  readonly app: NestFastifyApplication;
  readonly http: TestAgent;
  readonly database: Database;
  readonly testDatabase: TestDatabase;
  /** Every JSON log line the app wrote, for assertions. */
  readonly logs: Record<string, unknown>[];
  close(): Promise<void>;
}

/** The real application (same factory as main.ts) on a fresh database of its own. */
export async function startTestApp(env: Partial<Record<keyof EnvInput, string>> = {}, options: { clock?: Clock } = {}): Promise<TestApp> {
  const testDatabase = await createTestDatabase();
  // Test webhook receivers listen on loopback, which a deployment refuses by default.
  const config = parseConfig({
    NODE_ENV: 'test',
    LOG_LEVEL: 'info',
    WEBHOOK_PRIVATE_TARGETS: 'allow',
    ...env,
    DATABASE_URL: testDatabase.appUrl,
  });
  const logs: Record<string, unknown>[] = [];
  const sink = new Writable({
    write(chunk: Buffer, _enc, done) {
      for (const line of chunk.toString('utf8').split('\n')) if (line) logs.push(JSON.parse(line) as Record<string, unknown>);
      done();
    },
  });
  const database = createDatabase({ databaseUrl: testDatabase.appUrl, poolMax: 5 });
  const app = await createApp({ config, database, logger: createLogger(config, sink), ...(options.clock ? { clock: options.clock } : {}) });
  await app.init();
  await app.getHttpAdapter().getInstance().ready();
  return {
    app,
    http: request(app.getHttpServer()),
    database,
    testDatabase,
    logs,
    async close() {
      await app.close();
      await database.close();
      await testDatabase.drop();
    },
  };
}
