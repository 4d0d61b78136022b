import { rm } from 'node:fs/promises';

import type { EmbeddedServer } from '../../libs/data/src/embedded/embedded-postgres';
import { withClient } from './global-setup';

export default async function globalTeardown(): Promise<void> {
  const state = (globalThis as Record<string, unknown>).__registryTestServer as { server: EmbeddedServer; dataDir: string } | undefined;
  if (state) {
    await state.server.stop();
    await rm(state.dataDir, { recursive: true, force: true });
    return;
  }
  const admin = process.env.REGISTRY_TEST_ADMIN_URL;
  const template = process.env.REGISTRY_TEST_TEMPLATE;
  if (admin && template) await withClient(admin, (c) => c.query(`DROP DATABASE IF EXISTS ${template}`));
}
