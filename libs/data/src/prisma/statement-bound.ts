import type { PoolClient } from 'pg';

/**
 * A statement the database did not answer in time. The connection it ran on has been closed:
 * a server that is frozen (stopped processes, a partition that keeps TCP open) would otherwise
 * hold the next statement on that connection as well.
 */
export class StatementTimeoutError extends Error {
  override readonly name = 'StatementTimeoutError';

  constructor(readonly timeoutMs: number) {
    super(`Database statement timed out: no answer within ${timeoutMs} ms; the connection was closed`);
  }
}

type Callback = (err: Error | undefined, result?: unknown) => void;
type Query = (...args: unknown[]) => unknown;

/**
 * Bounds every statement sent on `client`: past `timeoutMs` without an answer the caller gets a
 * {@link StatementTimeoutError} and the client is ended. `end()` on a client with a statement in flight
 * destroys its socket at once (pg/lib/client.js `end`), and an ended client is never handed out again
 * (pg-pool `_release` drops a client whose `_ending` is set), so neither the pool nor an interactive
 * transaction can reuse the connection; the transaction's ROLLBACK fails at once ("not queryable").
 *
 * node-postgres' own `query_timeout` is not used: it answers the caller but leaves the statement on the
 * connection, which then goes back to the pool (after a transaction's ROLLBACK, queued behind it, was
 * dropped), and it ends a cursor (an export) after that long whatever its progress.
 * Cursors and other submittables are therefore left unbounded here: an export's cursor has the server's
 * statement timeout only (its own, 30 minutes), which a frozen server does not enforce.
 */
export function boundStatements(client: PoolClient, timeoutMs: number, onTimeout?: (err: StatementTimeoutError) => void): void {
  const query = client.query.bind(client) as Query;
  const bounded: Query = (...args) => {
    if (isSubmittable(args[0])) return query(...args);
    const callbackAt = args.findIndex((arg, i) => i > 0 && typeof arg === 'function');
    const callback = callbackAt > 0 ? (args[callbackAt] as Callback) : undefined;
    const request = callbackAt > 0 ? args.slice(0, callbackAt) : args;
    const outcome = new Promise<unknown>((resolve, reject) => {
      let settled = false;
      const timer = setTimeout(() => {
        if (settled) return;
        settled = true;
        const err = new StatementTimeoutError(timeoutMs);
        reject(err);
        // The statement still in flight then fails with "Connection terminated"; nobody waits for it any more.
        void client.end().catch(() => undefined);
        onTimeout?.(err);
      }, timeoutMs);
      const answered: Callback = (err, result) => {
        clearTimeout(timer);
        if (settled) return;
        settled = true;
        if (err) reject(err);
        else resolve(result);
      };
      try {
        query(...request, answered);
      } catch (err) {
        // Refused before it was sent (e.g. the client is already ending): no statement to wait for.
        answered(err as Error);
      }
    });
    if (!callback) return outcome;
    outcome.then(
      (result) => callback(undefined, result),
      (err: Error) => callback(err),
    );
    return undefined;
  };
  client.query = bounded as PoolClient['query'];
}

function isSubmittable(config: unknown): boolean {
  return typeof (config as { submit?: unknown } | null)?.submit === 'function';
}
