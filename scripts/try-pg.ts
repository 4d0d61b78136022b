import { startEmbeddedPostgres } from '@registry/data';
import { Client } from 'pg';
(async () => {
  const t0 = Date.now();
  const s = await startEmbeddedPostgres({ dataDir: process.argv[2]!, database: 'registry', log: console.log });
  console.log('started in', Date.now() - t0, 'ms', s.url.replace(/:[^:@]+@/, ':***@'), s.clusterDir);
  const c = new Client({ connectionString: s.url }); await c.connect();
  console.log((await c.query('select version()')).rows[0]); await c.end();
  const t1 = Date.now(); await s.stop(); console.log('stopped in', Date.now() - t1);
})().catch((e) => { console.error('FAILED', e); process.exit(1); });
