import { Inject, Injectable, Logger, type OnModuleDestroy, type OnModuleInit } from '@nestjs/common';
import { Client, Pool } from 'pg';

import { APP_CONFIG, type AppConfig } from '../config/config.schema';

/** The database announces credential changes here (migration 20261204050000). */
export const CREDENTIAL_CHANNEL = 'registry_credentials';
const RECONNECT_MIN_MS = 500;
const RECONNECT_MAX_MS = 30_000;
const MAX_ENTRIES = 10_000;

interface Entry<T> {
  readonly value: T;
  readonly storedAtMs: number;
}

/**
 * Service credentials as last read from the database, for at most `ttlMs`, so the factor
 * service does not read the credential row on every call. Stale entries cannot outlive a
 * revocation: every instance LISTENs on its own connection, the database NOTIFYs the key id on
 * any change that matters (trigger on service_credentials), and the entry is dropped. Nothing is
 * cached while that connection is down (all entries are dropped when it goes), and a read that
 * overlapped a notification is not cached, so a row read just before a revocation committed is
 * never kept after it.
 */
@Injectable()
export class CredentialCache<T = unknown> implements OnModuleInit, OnModuleDestroy {
  private readonly logger = new Logger('CredentialCache');
  private readonly entries = new Map<string, Entry<T>>();
  private readonly ttlMs: number;
  private listener: Client | null = null;
  private listening = false;
  private stopped = false;
  private retryMs = RECONNECT_MIN_MS;
  private retryTimer: NodeJS.Timeout | null = null;
  /** Bumped by every notification and disconnection: a read that spans a bump is not cached. */
  private generation = 0;

  constructor(
    private readonly pool: Pool,
    @Inject(APP_CONFIG) config: AppConfig,
  ) {
    this.ttlMs = config.auth.credentialCacheMs;
  }

  async onModuleInit(): Promise<void> {
    if (this.ttlMs > 0) await this.connect();
  }

  async onModuleDestroy(): Promise<void> {
    this.stopped = true;
    if (this.retryTimer) clearTimeout(this.retryTimer);
    this.drop();
    await this.listener?.end().catch(() => undefined);
    this.listener = null;
  }

  /** Whether entries are being kept (the cache is on and the listener is connected). */
  get active(): boolean {
    return this.listening;
  }

  get(keyId: string, nowMs: number): T | undefined {
    const entry = this.entries.get(keyId);
    if (!entry) return undefined;
    if (nowMs - entry.storedAtMs >= this.ttlMs || nowMs < entry.storedAtMs) {
      this.entries.delete(keyId);
      return undefined;
    }
    return entry.value;
  }

  /** A token to take before reading the database; `put` ignores the read if anything changed since. */
  ticket(): number {
    return this.generation;
  }

  put(keyId: string, value: T, nowMs: number, ticket: number): void {
    if (!this.listening || ticket !== this.generation) return;
    if (this.entries.size >= MAX_ENTRIES) this.entries.clear();
    this.entries.set(keyId, { value, storedAtMs: nowMs });
  }

  forget(keyId: string): void {
    this.generation++;
    this.entries.delete(keyId);
  }

  private drop(): void {
    this.listening = false;
    this.generation++;
    this.entries.clear();
  }

  private async connect(): Promise<void> {
    const client = new Client(this.pool.options);
    this.listener = client;
    client.on('notification', (message) => {
      if (message.channel === CREDENTIAL_CHANNEL && message.payload) this.forget(message.payload);
    });
    const lost = (reason: string) => {
      if (this.listener !== client) return;
      this.listener = null;
      this.drop();
      client.end().catch(() => undefined);
      if (!this.stopped) this.scheduleReconnect(reason);
    };
    client.on('error', (err) => lost(err.message));
    client.on('end', () => lost('connection ended'));
    try {
      await client.connect();
      await client.query(`LISTEN ${CREDENTIAL_CHANNEL}`);
      if (this.listener !== client) return;
      this.listening = true;
      this.retryMs = RECONNECT_MIN_MS;
    } catch (err) {
      lost((err as Error).message);
    }
  }

  private scheduleReconnect(reason: string): void {
    this.logger.warn(`credential change listener down (${reason}); credentials are read on every request until it is back`);
    const delay = this.retryMs;
    this.retryMs = Math.min(this.retryMs * 2, RECONNECT_MAX_MS);
    this.retryTimer = setTimeout(() => {
      this.retryTimer = null;
      void this.connect();
    }, delay);
    this.retryTimer.unref();
  }
}
