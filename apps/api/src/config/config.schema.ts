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
  // Longer than the server's own 30 s statement timeout, which wins whenever the server is alive.
  DB_QUERY_TIMEOUT_MS: positiveInt.min(100).default(35_000),
  BODY_LIMIT_BYTES: positiveInt.default(1_048_576),
  SHUTDOWN_GRACE_MS: positiveInt.default(10_000),
  // The due-date scheduler (notices); unset = on, except under NODE_ENV=test.
  SCHEDULER_ENABLED: z.enum(['true', 'false']).optional(),
  SCHEDULER_PERIOD_SECONDS: positiveInt.min(5).max(86_400).default(300),
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
  CREDENTIAL_CACHE_SECONDS: z.coerce.number().int().min(0).max(300).default(30),
  TRUST_PROXY: z
    .enum(['true', 'false'])
    .default('false')
    .transform((v) => v === 'true'),
  // Notice delivery (webhooks and e-mail); see the README's "Notices by webhook and e-mail".
  WEBHOOK_SECRET_KEY: z
    .string()
    .trim()
    .refine((v) => /^[A-Za-z0-9+/]{43}=$/.test(v) && Buffer.from(v, 'base64').length === 32, {
      error: 'must be 32 random bytes in base64 (openssl rand -base64 32)',
    })
    .optional(),
  WEBHOOK_PRIVATE_TARGETS: z
    .enum(['refuse', 'allow'], { error: 'must be refuse or allow' })
    .default('refuse')
    .transform((v) => v === 'allow'),
  SMTP_URL: z
    .string()
    .trim()
    .refine((v) => /^smtps?:\/\/[^\s]+$/.test(v) && URL.canParse(v), { error: 'must be an smtp:// or smtps:// URL' })
    .optional(),
  MAIL_FROM: z
    .string()
    .trim()
    .max(300)
    .refine((v) => /^([^<>\r\n]*<[^\s<>@]+@[^\s<>@]+>|[^\s<>@]+@[^\s<>@]+)$/.test(v), {
      error: 'must be an address, optionally with a name: Registry <registry@waterworks.example>',
    })
    .optional(),
  DELIVERY_WORKER_PERIOD_MS: z.coerce.number().int().min(0).max(3_600_000).optional(),
  DELIVERY_MAX_ATTEMPTS: positiveInt.max(50).default(8),
  DELIVERY_RETRY_BASE_MS: positiveInt.max(86_400_000).default(60_000),
  DELIVERY_RETRY_MAX_MS: positiveInt.max(7 * 86_400_000).default(6 * 3_600_000),
  DELIVERY_TIMEOUT_MS: positiveInt.max(120_000).default(10_000),
  // Idempotency-Key on writes: how long a key's answer is kept, and how long a request waits for another with the same key.
  IDEMPOTENCY_KEY_TTL_HOURS: positiveInt.max(24 * 30).default(24),
  IDEMPOTENCY_WAIT_SECONDS: positiveInt.max(50).default(10),
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
    /** A statement unanswered this long fails (503) and its connection is closed. */
    readonly queryTimeoutMs: number;
  };
  readonly auth: {
    readonly sessionIdleMs: number;
    readonly sessionAbsoluteMs: number;
    readonly signInMaxFailures: number;
    readonly signInWindowMs: number;
    /** How long a verified service credential is reused without reading it again; 0 = never. */
    readonly credentialCacheMs: number;
  };
  readonly logLevel: Env['LOG_LEVEL'];
  readonly shutdownGraceMs: number;
  /** The due-date scheduler: whether this instance runs passes on its own, and how often. */
  readonly scheduler: { readonly enabled: boolean; readonly periodMs: number };
  readonly delivery: DeliveryConfig;
  /** Idempotency keys: lifetime of a key's answer, and how long a request waits for another with the same key. */
  readonly idempotency: { readonly ttlMs: number; readonly waitMs: number };
}

/** Notice delivery: the worker, its retries, and the channels (each off when not configured). */
export interface DeliveryConfig {
  /** How often the worker looks for due deliveries; 0 = no worker in this process (the default under NODE_ENV=test). */
  readonly workerPeriodMs: number;
  readonly maxAttempts: number;
  readonly retryBaseMs: number;
  readonly retryMaxMs: number;
  readonly timeoutMs: number;
  /** Base64 of the 32-byte key that seals webhook secrets; null = webhooks cannot be registered. */
  readonly webhookSecretKey: string | null;
  /** Webhooks may target loopback, private and reserved addresses (a closed lab network); off by default. */
  readonly allowPrivateTargets: boolean;
  /** null = no e-mail. */
  readonly smtp: { readonly url: string; readonly from: string } | null;
}

export class ConfigError extends Error {
  override readonly name = 'ConfigError';
}

/** Variables whose value may hold a key or a password: a bad one is named, never echoed. */
const SECRET_VARIABLES = new Set(['WEBHOOK_SECRET_KEY', 'SMTP_URL']);

/** Parses the environment; a bad value throws one line naming the variable. */
export function parseConfig(source: Record<string, string | undefined>): AppConfig {
  const cleaned = Object.fromEntries(Object.entries(source).filter(([, v]) => v !== undefined && v !== ''));
  const result = configSchema.safeParse(cleaned);
  if (!result.success) {
    const issue = result.error.issues[0];
    const name = String(issue?.path[0] ?? 'environment');
    const got = SECRET_VARIABLES.has(name) ? '(value not shown)' : `(got ${JSON.stringify(source[name] ?? '')})`;
    throw new ConfigError(`Invalid configuration: ${name} ${issue?.message ?? 'is invalid'} ${got}`);
  }
  const e = result.data;
  if (e.SMTP_URL && !e.MAIL_FROM) {
    throw new ConfigError('Invalid configuration: MAIL_FROM is required when SMTP_URL is set (got "")');
  }
  // A request waiting for another with the same Idempotency-Key waits in a statement: the bound must outlast it.
  if (e.DB_QUERY_TIMEOUT_MS <= e.IDEMPOTENCY_WAIT_SECONDS * 1000) {
    throw new ConfigError(
      `Invalid configuration: DB_QUERY_TIMEOUT_MS must be longer than IDEMPOTENCY_WAIT_SECONDS (${e.IDEMPOTENCY_WAIT_SECONDS} s) ` +
        `(got ${JSON.stringify(source.DB_QUERY_TIMEOUT_MS ?? '')})`,
    );
  }
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
      queryTimeoutMs: e.DB_QUERY_TIMEOUT_MS,
    },
    auth: {
      sessionIdleMs: e.SESSION_IDLE_MINUTES * 60_000,
      sessionAbsoluteMs: e.SESSION_ABSOLUTE_HOURS * 3_600_000,
      signInMaxFailures: e.SIGN_IN_MAX_FAILURES,
      signInWindowMs: e.SIGN_IN_WINDOW_MINUTES * 60_000,
      credentialCacheMs: e.CREDENTIAL_CACHE_SECONDS * 1000,
    },
    logLevel: e.LOG_LEVEL,
    shutdownGraceMs: e.SHUTDOWN_GRACE_MS,
    scheduler: {
      enabled: e.SCHEDULER_ENABLED === undefined ? e.NODE_ENV !== 'test' : e.SCHEDULER_ENABLED === 'true',
      periodMs: e.SCHEDULER_PERIOD_SECONDS * 1000,
    },
    delivery: {
      workerPeriodMs: e.DELIVERY_WORKER_PERIOD_MS ?? (e.NODE_ENV === 'test' ? 0 : 15_000),
      maxAttempts: e.DELIVERY_MAX_ATTEMPTS,
      retryBaseMs: e.DELIVERY_RETRY_BASE_MS,
      retryMaxMs: Math.max(e.DELIVERY_RETRY_MAX_MS, e.DELIVERY_RETRY_BASE_MS),
      timeoutMs: e.DELIVERY_TIMEOUT_MS,
      webhookSecretKey: e.WEBHOOK_SECRET_KEY ?? null,
      allowPrivateTargets: e.WEBHOOK_PRIVATE_TARGETS,
      smtp: e.SMTP_URL && e.MAIL_FROM ? { url: e.SMTP_URL, from: e.MAIL_FROM } : null,
    },
    idempotency: { ttlMs: e.IDEMPOTENCY_KEY_TTL_HOURS * 3_600_000, waitMs: e.IDEMPOTENCY_WAIT_SECONDS * 1000 },
  };
}

/** Nest injection token for {@link AppConfig}. */
export const APP_CONFIG = Symbol('APP_CONFIG');
