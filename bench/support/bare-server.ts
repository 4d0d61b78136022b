/**
 * The baseline of the factor benchmark: a bare Fastify server with a pg pool doing the
 * same indexed lookup as GET /v1/factors/current (the very statement the service runs,
 * by person id and vessel id), with no authentication, validation, logging, metrics or
 * presentation. Run as its own process: `node dist/bench/support/bare-server.js` with
 * BARE_DATABASE_URL, BARE_POOL_MAX and BARE_PORT; it prints `{"port":n}` when listening.
 */
import Fastify from 'fastify';
import { Pool } from 'pg';

import { FactorLookupRepository } from '../../apps/api/src/factors/factor-lookup.repository';

export async function startBareServer(options: { databaseUrl: string; poolMax: number; port: number }) {
  const pool = new Pool({ connectionString: options.databaseUrl, max: options.poolMax });
  const { name, text } = FactorLookupRepository.statementFor('id', 'id', false);
  const app = Fastify({ logger: false });
  app.get<{ Querystring: { personId?: string; vesselId?: string } }>('/bare/factors/current', async (request, reply) => {
    const { personId, vesselId } = request.query;
    if (!personId || !vesselId) return reply.status(400).send({ error: 'personId and vesselId are required' });
    const { rows } = await pool.query({ name, text, values: [personId, vesselId] });
    const row = rows[0] as Record<string, unknown> | undefined;
    if (!row?.factor_id) return reply.status(404).send({ error: 'no factor' });
    return row;
  });
  const address = await app.listen({ port: options.port, host: '127.0.0.1' });
  return {
    port: Number(new URL(address).port),
    async close() {
      await app.close();
      await pool.end();
    },
  };
}

if (require.main === module) {
  const databaseUrl = process.env.BARE_DATABASE_URL;
  if (!databaseUrl) throw new Error('BARE_DATABASE_URL is required');
  startBareServer({ databaseUrl, poolMax: Number(process.env.BARE_POOL_MAX ?? 10), port: Number(process.env.BARE_PORT ?? 0) })
    .then((server) => {
      process.stdout.write(`${JSON.stringify({ port: server.port })}\n`);
      const stop = () => void server.close().then(() => process.exit(0));
      process.on('SIGTERM', stop);
      process.on('SIGINT', stop);
    })
    .catch((err: unknown) => {
      console.error(err);
      process.exit(1);
    });
}
