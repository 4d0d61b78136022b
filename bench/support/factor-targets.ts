import type { LoadTarget } from './factors-load';

/** A (person, vessel) pair with a current factor, and a volume to ask a correction for. */
export interface FactorPair {
  readonly personId: string;
  readonly vesselId: string;
  readonly email: string;
  readonly assetTag: string;
  readonly indicatedVolumeMl: string;
}

const pick = (pairs: readonly FactorPair[]): FactorPair => pairs[Math.floor(Math.random() * pairs.length)] as FactorPair;
const qs = (params: Record<string, string>) => new URLSearchParams(params).toString();

/** The bare baseline and the service's three factor endpoints, each request on a random (person, vessel) pair. */
export function factorTargets(
  pairs: readonly FactorPair[],
  ports: { service: number; bare: number },
  key: string,
): (LoadTarget & { server: 'bare' | 'service' })[] {
  const service = `http://127.0.0.1:${ports.service}`;
  const auth = { authorization: `Bearer ${key}` };
  return [
    {
      id: 'bare-lookup',
      server: 'bare',
      description: 'bare Fastify + pg: the same lookup by person and vessel id, no auth or presentation',
      url: `http://127.0.0.1:${ports.bare}`,
      method: 'GET',
      headers: {},
      next: () => {
        const p = pick(pairs);
        return { path: `/bare/factors/current?${qs({ personId: p.personId, vesselId: p.vesselId })}` };
      },
    },
    {
      id: 'current-by-ids',
      server: 'service',
      description: 'GET /v1/factors/current?personId&vesselId (service credential)',
      url: service,
      method: 'GET',
      headers: auth,
      next: () => {
        const p = pick(pairs);
        return { path: `/v1/factors/current?${qs({ personId: p.personId, vesselId: p.vesselId })}` };
      },
    },
    {
      id: 'current-by-tag-email',
      server: 'service',
      description: 'GET /v1/factors/current?assetTag&email (service credential)',
      url: service,
      method: 'GET',
      headers: auth,
      next: () => {
        const p = pick(pairs);
        return { path: `/v1/factors/current?${qs({ assetTag: p.assetTag, email: p.email })}` };
      },
    },
    {
      id: 'corrections',
      server: 'service',
      description: 'POST /v1/factors/corrections by ids, one-mark ratio or curve interpolation (service credential)',
      url: service,
      method: 'POST',
      headers: { ...auth, 'content-type': 'application/json' },
      next: () => {
        const p = pick(pairs);
        return {
          path: '/v1/factors/corrections',
          body: JSON.stringify({ personId: p.personId, vesselId: p.vesselId, indicatedVolumeMl: p.indicatedVolumeMl }),
        };
      },
    },
  ];
}
