import { type CanActivate, type ExecutionContext, Injectable } from '@nestjs/common';
import { Reflector } from '@nestjs/core';

import { DomainError } from '../common/problem/domain-error';
import type { Scope } from './actor';
import { type ContextualRequest, CREDENTIAL_SCOPES, OPEN_DURING_PASSWORD_CHANGE, PUBLIC_ROUTE } from './auth.decorators';
import { Authenticator } from './authenticator';
import { parseBearer } from './tokens';

/**
 * Every route needs a valid bearer token unless marked @Public(). Service
 * credentials reach only routes marked @CredentialScopes(...) and only with
 * one of those scopes. Object-level rules live in the services.
 */
@Injectable()
export class AuthGuard implements CanActivate {
  constructor(
    private readonly reflector: Reflector,
    private readonly authenticator: Authenticator,
  ) {}

  async canActivate(context: ExecutionContext): Promise<boolean> {
    const targets = [context.getHandler(), context.getClass()];
    if (this.reflector.getAllAndOverride<boolean>(PUBLIC_ROUTE, targets)) return true;
    const request = context.switchToHttp().getRequest<ContextualRequest>();
    const bearer = parseBearer(request.headers.authorization);
    const actor = bearer ? await this.authenticator.authenticate(bearer) : null;
    if (!actor) {
      throw new DomainError(
        'unauthenticated',
        'Sign in (POST /v1/sessions) or use a service credential.',
        undefined,
        {},
        {
          'www-authenticate': 'Bearer realm="calibration-registry"',
        },
      );
    }
    if (actor.kind === 'credential') {
      const allowed = this.reflector.getAllAndOverride<Scope[] | undefined>(CREDENTIAL_SCOPES, targets) ?? [];
      if (!allowed.some((scope) => actor.scopes.has(scope))) {
        throw new DomainError(
          'forbidden',
          allowed.length ? `This credential lacks the scope (${allowed.join(' or ')}).` : 'Service credentials cannot use this route.',
        );
      }
    }
    if (
      actor.kind === 'person' &&
      actor.mustChangePassword &&
      !this.reflector.getAllAndOverride<boolean>(OPEN_DURING_PASSWORD_CHANGE, targets)
    ) {
      throw new DomainError('password-change-required', 'Replace your one-time password first: POST /v1/me/password.');
    }
    request.registryContext = { actor, requestId: String(request.id), clientAddress: request.ip };
    return true;
  }
}
