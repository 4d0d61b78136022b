import { Injectable } from '@nestjs/common';

import type { RequestContext } from '../auth/actor';
import { Clock } from '../common/clock';
import { DomainError } from '../common/problem/domain-error';
import { lookupAccess } from './factor-access';
import { type LookedUpFactor, type Lookup, FactorLookupRepository, type PersonKey, type VesselKey } from './factor-lookup.repository';
import { presentCurrent } from './factor.presenter';
import type { CurrentFactorQuery, CurrentFactorView } from './factor.schemas';

/** What a lookup resolved to: the person's factor, or (asked for explicitly) the nominal fallback. */
export type Resolved =
  | { readonly source: 'factor'; readonly lookup: Lookup; readonly personId: string; readonly factor: LookedUpFactor }
  | {
      readonly source: 'nominal-fallback';
      readonly lookup: Lookup;
      readonly personId: string;
      readonly limitMl: string;
      readonly fallbackFor: { readonly code: 'no-factor' | 'factor-expired'; readonly detail: string; readonly validUntil: Date | null };
    };

export interface LookupRequest {
  readonly person: PersonKey;
  readonly vessel: VesselKey;
  /** The instant asked about; null = now (the current factor). */
  readonly at: Date | null;
  readonly allowNominalFallback: boolean;
}

/** The request's identifiers as repository keys (the schemas guarantee exactly one of each). */
export function keysOf(q: { personId?: string; email?: string; externalRef?: string; vesselId?: string; assetTag?: string }): {
  person: PersonKey;
  vessel: VesselKey;
} {
  const person: PersonKey =
    q.personId !== undefined
      ? { by: 'id', value: q.personId }
      : q.email !== undefined
        ? { by: 'email', value: q.email }
        : { by: 'externalRef', value: q.externalRef ?? '' };
  const vessel: VesselKey = q.vesselId !== undefined ? { by: 'id', value: q.vesselId } : { by: 'assetTag', value: q.assetTag ?? '' };
  return { person, vessel };
}

const noVessel = (vessel: VesselKey) =>
  new DomainError('not-found', vessel.by === 'id' ? 'No vessel with that id.' : `No vessel with asset tag ${vessel.value}.`);

/**
 * Finds the factor a person may use on a vessel, applying the access rules and
 * the distinct problems in a fixed order: vessel visible → the person named may be
 * asked about → the person is a member of the vessel's lab → the person is active and the vessel in service
 * (for the current factor) → a factor exists → it has not expired.
 */
@Injectable()
export class FactorLookupService {
  constructor(
    private readonly lookups: FactorLookupRepository,
    private readonly clock: Clock,
  ) {}

  /** GET /v1/factors/current: the factor in force now (or at `at`), with its ETag. */
  async current(ctx: RequestContext, q: CurrentFactorQuery): Promise<{ view: CurrentFactorView; etag: string | null }> {
    const at = q.at === undefined ? null : new Date(q.at);
    if (at && at.getTime() > this.clock.now().getTime()) {
      throw new DomainError('validation-failed', 'The instant asked about is in the future.', [
        { field: 'at', reason: 'must not be in the future' },
      ]);
    }
    return presentCurrent(await this.resolve(ctx, { ...keysOf(q), at, allowNominalFallback: q.fallback === 'nominal' }));
  }

  async resolve(ctx: RequestContext, req: LookupRequest): Promise<Resolved> {
    const asOf = req.at ?? this.clock.now();
    const found = await this.lookups.find(req.person, req.vessel, req.at);
    if (!found) throw noVessel(req.vessel);
    const access = lookupAccess(ctx.actor, found.vessel.labId, found.personId);
    if (access === 'no-vessel') throw noVessel(req.vessel);
    if (access === 'not-yours') {
      throw new DomainError('not-found', 'No factor of yours matches: you may look up only your own factors.');
    }
    const ids = { vesselId: found.vessel.id, labId: found.vessel.labId };
    if (!found.personId || !found.isMember) {
      throw new DomainError(
        'person-not-member',
        `The person named by ${req.person.by} is not a member of the lab that owns this vessel.`,
        [{ field: req.person.by === 'id' ? 'personId' : req.person.by, reason: 'names no member of the vessel’s lab' }],
        ids,
      );
    }
    const personId = found.personId;
    // A disabled person no longer works in the lab: their factors answer only questions about the past.
    if (req.at === null && !found.personActive) {
      throw new DomainError('person-not-active', 'The person named is disabled: their factors may not be used.', undefined, {
        ...ids,
        personId,
      });
    }
    // A question about the past is answered whatever the vessel's status now; the current factor of a
    // quarantined or retired vessel is not usable.
    if (req.at === null && found.vessel.status !== 'in-service') {
      throw new DomainError(
        'vessel-not-in-service',
        `The vessel is ${found.vessel.status}: none of its factors may be used until it is back in service.`,
        undefined,
        { ...ids, vesselStatus: found.vessel.status },
      );
    }
    const factor = found.factor;
    if (!factor) {
      const detail = req.at
        ? `No factor of this person for this vessel was in force at ${req.at.toISOString()}.`
        : 'This person has no current factor for this vessel: no approved calibration of theirs on it is on record.';
      return this.fallbackOr(req, found, personId, { code: 'no-factor', detail, validUntil: null });
    }
    if (factor.validUntil.getTime() <= asOf.getTime()) {
      const detail = `The factor expired at ${factor.validUntil.toISOString()}: the person must recalibrate the vessel.`;
      return this.fallbackOr(req, found, personId, { code: 'factor-expired', detail, validUntil: factor.validUntil }, factor.id);
    }
    return { source: 'factor', lookup: found, personId, factor };
  }

  /** The nominal fallback when asked for and possible; otherwise the problem it would stand in for. */
  private fallbackOr(
    req: LookupRequest,
    found: Lookup,
    personId: string,
    problem: { code: 'no-factor' | 'factor-expired'; detail: string; validUntil: Date | null },
    factorId?: string,
  ): Resolved {
    const limitMl = found.vessel.limitMl;
    if (req.allowNominalFallback && limitMl !== null) {
      return { source: 'nominal-fallback', lookup: found, personId, limitMl, fallbackFor: problem };
    }
    throw new DomainError(problem.code, problem.detail, undefined, {
      vesselId: found.vessel.id,
      personId,
      ...(problem.validUntil ? { validUntil: problem.validUntil.toISOString() } : {}),
      ...(factorId ? { factorId } : {}),
      ...(req.allowNominalFallback
        ? { fallbackRefused: 'The vessel has no acceptance limit to give as the uncertainty of a nominal value.' }
        : {}),
    });
  }
}
