import 'reflect-metadata';

import { Writable } from 'node:stream';

import type { NestFastifyApplication } from '@nestjs/platform-fastify';
import type { Database } from '@registry/data';

import { createApp } from '../../../apps/api/src/app.factory';
import type { AppConfig } from '../../../apps/api/src/config/config.schema';
import { createLogger } from '../../../apps/api/src/logging';

/** The real application on a loopback port, its JSON log lines collected into `logs`. */
export async function listeningApp(
  config: AppConfig,
  database: Database,
  logs: Record<string, unknown>[],
): Promise<{ app: NestFastifyApplication; baseUrl: string }> {
  const sink = new Writable({
    write: (chunk: Buffer, _e, done) => {
      for (const line of chunk.toString('utf8').split('\n')) if (line) logs.push(JSON.parse(line) as Record<string, unknown>);
      done();
    },
  });
  const app = await createApp({ config, database, logger: createLogger(config, sink) });
  await app.listen({ port: 0, host: '127.0.0.1' });
  return { app, baseUrl: `http://127.0.0.1:${(app.getHttpServer().address() as { port: number }).port}` };
}
