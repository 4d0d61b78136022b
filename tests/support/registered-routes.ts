import { subscribe, unsubscribe } from 'node:diagnostics_channel';

/**
 * Runs `start` (which builds an app) and collects every route Fastify registers meanwhile, as
 * "METHOD /url" (HEAD and OPTIONS left out): Fastify announces each new instance, and its
 * onRoute hook then sees every route as it is added.
 */
export async function withRegisteredRoutes<T>(start: () => Promise<T>): Promise<{ result: T; routes: ReadonlySet<string> }> {
  const routes = new Set<string>();
  const collect = (message: unknown) => {
    const { fastify } = message as {
      fastify: { addHook(name: 'onRoute', hook: (route: { method: string | string[]; url: string }) => void): void };
    };
    fastify.addHook('onRoute', (route) => {
      for (const method of [route.method].flat()) if (method !== 'HEAD' && method !== 'OPTIONS') routes.add(`${method} ${route.url}`);
    });
  };
  subscribe('fastify.initialization', collect);
  try {
    return { result: await start(), routes };
  } finally {
    unsubscribe('fastify.initialization', collect);
  }
}
