/**
 * A write route without idempotency keys. `ignored`: it changes no registry state (a
 * computation, or the session of the caller), so a retry is harmless and the header is
 * not looked at. `refused`: it changes state but its answer cannot be kept for a replay;
 * the header gets a 400 that says why, so no client believes itself protected.
 */
export interface Exemption {
  readonly mode: 'ignored' | 'refused';
  readonly reason: string;
}

export const EXEMPTION_METADATA = 'registry:idempotency-exemption';

/** The exemption of a route handler, or undefined when it takes keys. */
export const exemptionOf = (handler: object): Exemption | undefined =>
  Reflect.getMetadata(EXEMPTION_METADATA, handler) as Exemption | undefined;
