import { applyDecorators, createParamDecorator, type ExecutionContext, SetMetadata } from '@nestjs/common';
import { ApiBearerAuth } from '@nestjs/swagger';
import type { FastifyRequest } from 'fastify';

import type { RequestContext, Scope } from './actor';

export const PUBLIC_ROUTE = 'registry:public';
export const CREDENTIAL_SCOPES = 'registry:credential-scopes';
export const OPEN_DURING_PASSWORD_CHANGE = 'registry:open-during-password-change';

/** No sign-in needed (health, docs, sign-in itself). */
export const Public = () => SetMetadata(PUBLIC_ROUTE, true);

/**
 * Service credentials may call this route when they hold one of the scopes.
 * Routes without it are for signed-in people only.
 */
export const CredentialScopes = (...scopes: Scope[]) => applyDecorators(SetMetadata(CREDENTIAL_SCOPES, scopes), ApiBearerAuth());

/** Reachable while the person still has to replace a one-time password (sign-out, password change, who am I). */
export const OpenDuringPasswordChange = () => SetMetadata(OPEN_DURING_PASSWORD_CHANGE, true);

/** Signed-in people only (the default); documents the bearer requirement. */
export const PeopleOnly = () => ApiBearerAuth();

export interface ContextualRequest extends FastifyRequest {
  registryContext?: RequestContext;
}

/** The caller and request id, set by AuthGuard. */
export const Ctx = createParamDecorator((_data: unknown, host: ExecutionContext): RequestContext => {
  const ctx = host.switchToHttp().getRequest<ContextualRequest>().registryContext;
  if (!ctx) throw new Error('Ctx() used on a public route');
  return ctx;
});
