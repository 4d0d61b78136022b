import { resolve } from 'node:path';

import { z } from 'zod';

const port = z.coerce.number().int().min(0).max(65535);
const positiveInt = z.coerce.number().int().positive();
const postgresUrl = z
  .string()
  .trim()
  .refine((v) => /^postgres(ql)?:\/\//.test(v), 'must be a postgresql:// URL');

/** Every environment variable the service reads, validated once at start-up. */
export const configSchema = z.object({
  NODE_ENV: z.enum(['development', 'production', 'test']).default('development'),
  PORT: port.default(3000),
  HOST: z.string().trim().min(1).default('127.0.0.1'),
  DATABASE_URL: postgresUrl.optional(),
  DATABASE_MIGRATION_URL: postgresUrl.optional(),
  DATA_DIR: z.string().trim().min(1).default('./.data/postgres'),
  EMBEDDED_DB_PORT: port.default(0),
  LOG_LEVEL: z.enum(['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent']).default('info'),
  DB_POOL_MAX: positiveInt.max(200).default(10),
  DB_CONNECT_TIMEOUT_MS: positiveInt.default(3000),
  BODY_LIMIT_BYTES: positiveInt.default(1_048_576),
  SHUTDOWN_GRACE_MS: positiveInt.default(10_000),
  CORS_ORIGINS: z
    .string()
    .trim()
    .default('')
    .transform((v) =>
      v
        .split(',')
        .map((s) => s.trim())
        .filter(Boolean),
    )
    .pipe(z.array(z.url({ message: 'must be a comma-separated list of origins (https://host[:port])' }))),
  SESSION_IDLE_MINUTES: positiveInt.max(24 * 60).default(30),
  SESSION_ABSOLUTE_HOURS: positiveInt.max(24 * 30).default(12),
  SIGN_IN_MAX_FAILURES: positiveInt.max(1000).default(5),
  SIGN_IN_WINDOW_MINUTES: positiveInt.max(24 * 60).default(15),
  TRUST_PROXY: z
    .enum(['true', 'false'])
    .default('false')
    .transform((v) => v === 'true'),
});

export type EnvInput = z.input<typeof configSchema>;
type Env = z.output<typeof configSchema>;

/** Typed configuration the rest of the code receives (never `process.env`). */
export interface AppConfig {
  readonly env: Env['NODE_ENV'];
  readonly http: {
    readonly port: number;
    readonly host: string;
    readonly bodyLimitBytes: number;
    readonly corsOrigins: string[];
    readonly trustProxy: boolean;
  };
  readonly database: {
    readonly url?: string;
    /** Owner connection for migrations; the service itself uses `url`. */
    readonly migrationUrl?: string;
    readonly dataDir: string;
    readonly embeddedPort: number;
    readonly poolMax: number;
    readonly connectTimeoutMs: number;
  };
  readonly auth: {
    readonly sessionIdleMs: number;
    readonly sessionAbsoluteMs: number;
    readonly signInMaxFailures: number;
    readonly signInWindowMs: number;
  };
  readonly logLevel: Env['LOG_LEVEL'];
  readonly shutdownGraceMs: number;
}

export class ConfigError extends Error {
  override readonly name = 'ConfigError';
}

/** Parses the environment; a bad value throws one line naming the variable. */
export function parseConfig(source: Record<string, string | undefined>): AppConfig {
  const cleaned = Object.fromEntries(Object.entries(source).filter(([, v]) => v !== undefined && v !== ''));
  const result = configSchema.safeParse(cleaned);
  if (!result.success) {
    const issue = result.error.issues[0];
    const name = String(issue?.path[0] ?? 'environment');
    throw new ConfigError(`Invalid configuration: ${name} ${issue?.message ?? 'is invalid'} (got ${JSON.stringify(source[name] ?? '')})`);
  }
  const e = result.data;
  return {
    env: e.NODE_ENV,
    http: { port: e.PORT, host: e.HOST, bodyLimitBytes: e.BODY_LIMIT_BYTES, corsOrigins: e.CORS_ORIGINS, trustProxy: e.TRUST_PROXY },
    database: {
      ...(e.DATABASE_URL ? { url: e.DATABASE_URL } : {}),
      ...(e.DATABASE_MIGRATION_URL ? { migrationUrl: e.DATABASE_MIGRATION_URL } : {}),
      dataDir: resolve(e.DATA_DIR),
      embeddedPort: e.EMBEDDED_DB_PORT,
      poolMax: e.DB_POOL_MAX,
      connectTimeoutMs: e.DB_CONNECT_TIMEOUT_MS,
    },
    auth: {
      sessionIdleMs: e.SESSION_IDLE_MINUTES * 60_000,
      sessionAbsoluteMs: e.SESSION_ABSOLUTE_HOURS * 3_600_000,
      signInMaxFailures: e.SIGN_IN_MAX_FAILURES,
      signInWindowMs: e.SIGN_IN_WINDOW_MINUTES * 60_000,
    },
    logLevel: e.LOG_LEVEL,
    shutdownGraceMs: e.SHUTDOWN_GRACE_MS,
  };
}

/** Nest injection token for {@link AppConfig}. */
export const APP_CONFIG = Symbol('APP_CONFIG');
