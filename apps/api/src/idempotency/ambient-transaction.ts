import { AsyncLocalStorage } from 'node:async_hooks';

import type { Prisma, PrismaClient } from '@registry/data';

/** The transaction a keyed write runs in, while it is open. */
interface AmbientTransaction {
  readonly tx: Prisma.TransactionClient;
  open: boolean;
}

const ambient = new AsyncLocalStorage<AmbientTransaction>();

/**
 * Runs `work` so that every use of the shared Prisma client inside it (the services'
 * `prisma.$transaction(...)` and single statements alike) joins `tx` instead of opening a
 * transaction of its own. An idempotent write thereby commits its key and its answer in
 * the same transaction as the change itself. Once `work` settles the transaction is no
 * longer lent: anything the request left running falls back to the plain client.
 */
export async function runInTransaction<T>(tx: Prisma.TransactionClient, work: () => Promise<T>): Promise<T> {
  const store: AmbientTransaction = { tx, open: true };
  try {
    return await ambient.run(store, work);
  } finally {
    store.open = false;
  }
}

/** True while the caller runs inside {@link runInTransaction}. */
export const inAmbientTransaction = (): boolean => ambient.getStore()?.open === true;

type TransactionArgument = ((tx: Prisma.TransactionClient) => Promise<unknown>) | readonly Promise<unknown>[];

/**
 * The Prisma client services receive. Outside {@link runInTransaction} it is the client
 * itself (one AsyncLocalStorage lookup per property read); inside, `$transaction(fn)` calls
 * `fn` with the request's transaction (its options are the outer transaction's), and model
 * delegates and raw queries go to that transaction too.
 */
export function withAmbientTransactions(client: PrismaClient): PrismaClient {
  const bound = new Map<PropertyKey, unknown>();
  return new Proxy(client, {
    get(target, property) {
      const store = ambient.getStore();
      if (store?.open) {
        if (property === '$transaction') {
          return (argument: TransactionArgument) => (typeof argument === 'function' ? argument(store.tx) : Promise.all(argument));
        }
        if (property in store.tx) return (store.tx as unknown as Record<PropertyKey, unknown>)[property];
      }
      const value: unknown = Reflect.get(target, property, target);
      if (typeof value !== 'function') return value;
      let fn = bound.get(property);
      if (fn === undefined) {
        fn = (value as (...args: unknown[]) => unknown).bind(target);
        bound.set(property, fn);
      }
      return fn;
    },
  });
}
