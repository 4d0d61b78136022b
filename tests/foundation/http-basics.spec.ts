import { startTestApp, type TestApp } from '../support/test-app';

const PROBLEM = /^application\/problem\+json/;

describe('HTTP basics', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp({ BODY_LIMIT_BYTES: '2048' });
  });
  afterAll(() => t.close());

  it('answers an unknown route with a 404 problem', async () => {
    const res = await t.http.get('/v1/no-such-thing').expect(404);
    expect(res.headers['content-type']).toMatch(PROBLEM);
    expect(res.body).toMatchObject({
      type: '/problems/route-not-found',
      status: 404,
      code: 'route-not-found',
      instance: '/v1/no-such-thing',
    });
    expect(res.body.requestId).toBe(res.headers['x-request-id']);
  });

  it('answers malformed JSON with a 400 problem', async () => {
    const res = await t.http.post('/health/live').set('content-type', 'application/json').send('{"a": ').expect(400);
    expect(res.headers['content-type']).toMatch(PROBLEM);
    expect(res.body).toMatchObject({ code: 'malformed-body', status: 400 });
  });

  it('answers an over-large body with a 413 problem', async () => {
    const res = await t.http
      .post('/health/live')
      .set('content-type', 'application/json')
      .send(JSON.stringify({ pad: 'x'.repeat(4096) }))
      .expect(413);
    expect(res.headers['content-type']).toMatch(PROBLEM);
    expect(res.body).toMatchObject({ code: 'payload-too-large', status: 413 });
  });

  it('honours a plain X-Request-Id and replaces an unsafe one', async () => {
    const given = await t.http.get('/health/live').set('x-request-id', 'samples-batch-42.7').expect(200);
    expect(given.headers['x-request-id']).toBe('samples-batch-42.7');
    const unsafe = await t.http.get('/health/live').set('x-request-id', 'bad id\twith spaces').expect(200);
    expect(unsafe.headers['x-request-id']).toMatch(/^[0-9a-f-]{36}$/);
  });

  it('logs every request as JSON with its request id', async () => {
    await t.http.get('/health/ready').set('x-request-id', 'trace-me-123').expect(200);
    await new Promise((r) => setImmediate(r));
    const line = t.logs.find((l) => l.requestId === 'trace-me-123' && l.msg === 'request completed');
    expect(line).toMatchObject({ route: '/health/ready', status: 200, method: 'GET' });
  });

  it('sets security headers and no CORS header when CORS is not configured', async () => {
    const res = await t.http.get('/health/live').set('origin', 'https://elsewhere.example').expect(200);
    expect(res.headers).toMatchObject({
      'x-content-type-options': 'nosniff',
      'x-frame-options': 'DENY',
      'referrer-policy': 'no-referrer',
      'cache-control': 'no-store',
    });
    expect(res.headers['content-security-policy']).toContain("default-src 'none'");
    expect(res.headers['access-control-allow-origin']).toBeUndefined();
  });

  it('reports liveness and database readiness', async () => {
    await t.http.get('/health/live').expect(200, { status: 'live' });
    const ready = await t.http.get('/health/ready').expect(200);
    expect(ready.body).toMatchObject({ status: 'ready', checks: { database: 'up' } });
  });

  it('serves the interactive docs and an OpenAPI 3 document', async () => {
    const docs = await t.http.get('/docs').redirects(2).expect(200);
    expect(docs.text).toContain('swagger');
    const doc = await t.http.get('/openapi.json').expect(200);
    expect(doc.body.openapi).toMatch(/^3\./);
    expect(doc.body.paths['/health/ready']).toBeDefined();
    expect(doc.body.info.description).toContain('does not replace');
  });

  it('documents every problem type at its type URI', async () => {
    const list = await t.http.get('/problems').expect(200);
    expect(list.body.map((p: { code: string }) => p.code)).toEqual(expect.arrayContaining(['validation-failed', 'not-found', 'conflict']));
    const one = await t.http.get('/problems/precondition-failed').expect(200);
    expect(one.body).toMatchObject({ status: 412, type: '/problems/precondition-failed' });
    await t.http.get('/problems/nonsense').expect(404);
  });

  it('exposes Prometheus metrics by route template, status and pool usage', async () => {
    await t.http.get('/problems/conflict').expect(200);
    const res = await t.http.get('/metrics').expect(200);
    expect(res.headers['content-type']).toMatch(/^text\/plain/);
    expect(res.text).toMatch(/http_requests_total\{method="GET",route="\/problems\/:code",status="200"\} \d+/);
    expect(res.text).toMatch(/http_request_duration_seconds_bucket\{le="0.005",method="GET",route="\/problems\/:code",status="200"\}/);
    expect(res.text).toMatch(/db_pool_connections_total \d+/);
  });
});

describe('CORS when configured', () => {
  let t: TestApp;
  beforeAll(async () => {
    t = await startTestApp({ CORS_ORIGINS: 'https://bench.example' });
  });
  afterAll(() => t.close());

  it('allows the configured origin only', async () => {
    const ok = await t.http.get('/health/live').set('origin', 'https://bench.example').expect(200);
    expect(ok.headers['access-control-allow-origin']).toBe('https://bench.example');
    const other = await t.http.get('/health/live').set('origin', 'https://other.example').expect(200);
    expect(other.headers['access-control-allow-origin']).toBeUndefined();
  });
});
