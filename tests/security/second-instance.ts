import { Writable } from 'node:stream';

import { createDatabase } from '@registry/data';
import request from 'supertest';
import type TestAgent from 'supertest/lib/agent';

import { createApp } from '../../apps/api/src/app.factory';
import { type EnvInput, parseConfig } from '../../apps/api/src/config/config.schema';
import { createLogger } from '../../apps/api/src/logging';
import type { TestApp } from '../support/test-app';

/** Another instance of the service on the same database as `t` (as a second replica behind a load balancer). */
export async function secondInstance(
  t: TestApp,
  env: Partial<Record<keyof EnvInput, string>> = {},
): Promise<{ http: TestAgent; close(): Promise<void> }> {
  const config = parseConfig({ NODE_ENV: 'test', LOG_LEVEL: 'info', ...env, DATABASE_URL: t.testDatabase.appUrl });
  const database = createDatabase({ databaseUrl: t.testDatabase.appUrl, poolMax: 5 });
  const sink = new Writable({ write: (_chunk, _enc, done) => done() });
  const app = await createApp({ config, database, logger: createLogger(config, sink) });
  await app.init();
  await app.getHttpAdapter().getInstance().ready();
  return {
    http: request(app.getHttpServer()),
    async close() {
      await app.close();
      await database.close();
    },
  };
}
