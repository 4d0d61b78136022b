import { resolve } from 'node:path';

import { ConfigError, parseConfig } from '../../apps/api/src/config/config.schema';

describe('configuration', () => {
  it('has working defaults for a fresh clone', () => {
    const config = parseConfig({});
    expect(config.http).toMatchObject({ port: 3000, host: '127.0.0.1', corsOrigins: [] });
    expect(config.database.url).toBeUndefined();
    expect(config.database.dataDir).toBe(resolve('.data/postgres'));
    expect(config.logLevel).toBe('info');
    // The client's statement bound stays above the server's 30 s statement timeout.
    expect(config.database).toMatchObject({ connectTimeoutMs: 3000, queryTimeoutMs: 35_000 });
  });

  it.each([
    [{ PORT: 'eighty' }, /^Invalid configuration: PORT /],
    [{ PORT: '70000' }, /^Invalid configuration: PORT /],
    [{ DATABASE_URL: 'mysql://x' }, /^Invalid configuration: DATABASE_URL must be a postgresql:\/\/ URL/],
    [{ LOG_LEVEL: 'loud' }, /^Invalid configuration: LOG_LEVEL /],
    [{ CORS_ORIGINS: 'not a url' }, /^Invalid configuration: CORS_ORIGINS /],
    [{ DB_QUERY_TIMEOUT_MS: '50' }, /^Invalid configuration: DB_QUERY_TIMEOUT_MS /],
    [{ DB_QUERY_TIMEOUT_MS: '1.5s' }, /^Invalid configuration: DB_QUERY_TIMEOUT_MS /],
    [{ DB_QUERY_TIMEOUT_MS: '5000' }, /^Invalid configuration: DB_QUERY_TIMEOUT_MS must be longer than IDEMPOTENCY_WAIT_SECONDS \(10 s\)/],
    [{ DB_QUERY_TIMEOUT_MS: '2000', IDEMPOTENCY_WAIT_SECONDS: '2' }, /^Invalid configuration: DB_QUERY_TIMEOUT_MS must be longer/],
  ])('stops with one line naming the variable for %j', (env, message) => {
    expect(() => parseConfig(env)).toThrow(ConfigError);
    expect(() => parseConfig(env)).toThrow(message);
  });

  it('takes a statement bound longer than the idempotency wait', () => {
    expect(parseConfig({ DB_QUERY_TIMEOUT_MS: '2001', IDEMPOTENCY_WAIT_SECONDS: '2' }).database.queryTimeoutMs).toBe(2001);
  });

  it('treats empty variables as unset', () => {
    expect(parseConfig({ DATABASE_URL: '', PORT: '' }).http.port).toBe(3000);
  });

  it('parses a list of CORS origins', () => {
    expect(parseConfig({ CORS_ORIGINS: 'https://a.example, https://b.example:8443' }).http.corsOrigins).toEqual([
      'https://a.example',
      'https://b.example:8443',
    ]);
  });
});
