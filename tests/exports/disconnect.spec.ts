import http from 'node:http';
import type { AddressInfo } from 'node:net';

import { Client } from 'pg';

import { ExportStream } from '../../apps/api/src/exports/export-stream';
import { csvWriter } from '../../apps/api/src/exports/row-formats';
import { startTestApp, type TestApp } from '../support/test-app';
import { PERIOD, seedScenario } from './scenario';

type Scenario = Awaited<ReturnType<typeof seedScenario>>;

const ROWS = 200_000;

// A client that goes away stops the export: its query no longer runs and its connection is back in the pool.
describe('compliance exports: a client that disconnects', () => {
  let t: TestApp;
  let s: Scenario;
  let server: http.Server;
  let port: number;
  let owner: Client;

  beforeAll(async () => {
    t = await startTestApp();
    s = await seedScenario(t.database.prisma);
    owner = new Client({ connectionString: t.testDatabase.url });
    await owner.connect();
    // Many calibrations by SQL, so the export is still running when the client leaves (as the owner: the due-date
    // trigger, which recomputes a vessel's due date per row, is off meanwhile).
    await owner.query('SET statement_timeout = 0');
    await owner.query('ALTER TABLE calibrations DISABLE TRIGGER due_track');
    await owner.query(
      `INSERT INTO calibrations (lab_id, vessel_id, performer_id, entered_by_id, balance_id, thermometer_id, state, performed_at,
                                 delivery_mode, inputs, results, verdict, library_version, submitted_at, created_at)
       SELECT $1::uuid, $2::uuid, $3::uuid, $3::uuid, $4::uuid, $5::uuid, 'submitted',
              '2026-01-01T00:00:00Z'::timestamptz + n * interval '1 minute', 'deliver', '{"points": []}', '{"points": []}', 'pass', 'test',
              '2026-01-01T00:00:00Z'::timestamptz + n * interval '1 minute', '2026-01-01T00:00:00Z'
         FROM generate_series(1, ${ROWS}) AS n`,
      [s.cast.lab.id, s.pipette.id, s.cast.people.analyst.id, s.balance.id, s.thermometer.id],
    );
    await owner.query('ALTER TABLE calibrations ENABLE TRIGGER due_track');
    server = t.app.getHttpServer() as http.Server;
    await new Promise<void>((resolve) => server.listen(0, '127.0.0.1', resolve));
    port = (server.address() as AddressInfo).port;
  }, 120_000);
  afterAll(async () => {
    await owner?.end();
    await new Promise((resolve) => server.close(resolve));
    await t.close();
  });

  /** Starts an export and hangs up after the first chunk; resolves with the export id. */
  function startAndHangUp(format: string): Promise<string> {
    const payload = JSON.stringify({
      report: 'calibration-log',
      format,
      labIds: [s.cast.lab.id],
      ...PERIOD,
      asOf: new Date().toISOString(),
    });
    return new Promise((resolve, reject) => {
      const req = http.request(
        {
          host: '127.0.0.1',
          port,
          method: 'POST',
          path: '/v1/exports',
          headers: { authorization: `Bearer ${s.cast.tokens.admin}`, 'content-type': 'application/json' },
        },
        (res) => {
          if (res.statusCode !== 200) return reject(new Error(`status ${res.statusCode}`));
          res.once('data', () => {
            const id = String(res.headers['export-id']);
            req.destroy();
            resolve(id);
          });
        },
      );
      req.on('error', () => undefined);
      req.end(payload);
    });
  }

  async function eventually<T>(read: () => Promise<T>, done: (value: T) => boolean): Promise<T> {
    let value = await read();
    for (let i = 0; i < 200 && !done(value); i++) {
      await new Promise((resolve) => setTimeout(resolve, 25));
      value = await read();
    }
    return value;
  }

  it.each(['csv', 'pdf'])('cancels the %s export query, returns its connection and records the export as aborted', async (format) => {
    const id = await startAndHangUp(format);
    const record = await eventually(
      () => t.database.prisma.export.findUniqueOrThrow({ where: { id } }),
      (r) => r.state !== 'streaming',
    );
    expect(record.state).toBe('aborted');
    expect(record.sha256).toBeNull();
    expect(Number(record.rowCount)).toBeLessThan(ROWS);

    const running = await eventually(
      async () =>
        (
          await owner.query<{ n: number }>(
            `SELECT count(*)::int AS n FROM pg_stat_activity WHERE query LIKE $1 AND state = 'active' AND pid <> pg_backend_pid()`,
            [`%registry-export ${id}%`],
          )
        ).rows[0]?.n,
      (n) => n === 0,
    );
    expect(running).toBe(0);
    const pool = t.database.pool;
    const checkedOut = await eventually(
      async () => pool.totalCount - pool.idleCount,
      (n) => n === 0,
    );
    expect(checkedOut).toBe(0);
    // The connection works: the next request is served from the pool.
    const after = await t.database.pool.query<{ ok: number }>('SELECT 1 AS ok');
    expect(after.rows[0]?.ok).toBe(1);
    const audit = await t.database.prisma.auditEntry.findMany({ where: { entityId: id }, orderBy: { seq: 'asc' } });
    expect(audit.map((a) => a.action)).toEqual(['export', 'export-aborted']);
  });

  it('cancels a fetch that is running on the server, not only between fetches', async () => {
    // A query that would run for a minute before its first row: the client leaves while the server works on it.
    const stream = new ExportStream(t.database.pool, {
      exportId: 'slow-query-probe',
      sql: 'SELECT pg_sleep(60)::text AS "lab"',
      params: [],
      writer: () => Promise.resolve(csvWriter([{ name: 'lab', type: 'text' }])),
    });
    const started = Date.now();
    const opening = stream.open();
    await eventually(
      async () =>
        (
          await owner.query<{ n: number }>(
            `SELECT count(*)::int AS n FROM pg_stat_activity WHERE query LIKE '%registry-export slow-query-probe%' AND state = 'active' AND pid <> pg_backend_pid()`,
          )
        ).rows[0]?.n,
      (n) => n === 1,
    );
    await stream.cancel();
    await expect(opening).rejects.toThrow(/cancel/);
    expect(Date.now() - started).toBeLessThan(10_000);
    const running = await owner.query<{ n: number }>(
      `SELECT count(*)::int AS n FROM pg_stat_activity WHERE query LIKE '%registry-export slow-query-probe%' AND state = 'active' AND pid <> pg_backend_pid()`,
    );
    expect(running.rows[0]?.n).toBe(0);
    expect(t.database.pool.totalCount - t.database.pool.idleCount).toBe(0);
  });
});
