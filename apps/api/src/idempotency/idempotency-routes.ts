import type { DynamicModule, Type } from '@nestjs/common';
import { INTERCEPTORS_METADATA, METHOD_METADATA, MODULE_METADATA } from '@nestjs/common/constants';
import { RequestMethod } from '@nestjs/common/enums/request-method.enum';
import { ApiHeader, ApiResponse } from '@nestjs/swagger';

import { WeighingCorrectionController } from '../balance-checks/weighing-correction.controller';
import { CalculationsController } from '../calculations/calculations.controller';
import { CalendarFeedController } from '../calendar-feeds/calendar-feed.controller';
import { CredentialsController } from '../credentials/credentials.controller';
import { ExportController } from '../exports/export.controller';
import { FactorsController } from '../factors/factors.controller';
import { PeopleController } from '../people/people.controller';
import { SessionsController } from '../sessions/sessions.controller';
import { VesselController } from '../vessels/vessel.controller';
import { WebhookController } from '../webhooks/webhook.controller';
import { EXEMPTION_METADATA, type Exemption } from './idempotency-exemption';
import { IDEMPOTENCY_HEADER } from './idempotency-key';
import { IdempotencyInterceptor } from './idempotency.interceptor';

const SECRET_ONCE =
  'its response holds a secret that is shown once and stored only as a hash or sealed; keeping the response for a replay would keep the secret in clear';

const exempt = <T>(controller: Type<T>, methods: readonly (keyof T & string)[] | 'all', exemption: Exemption) => ({
  controller,
  methods,
  exemption,
});

/** Every write route that does not take the header, and why. Every other write route does. */
export const EXEMPTIONS = [
  exempt(CalculationsController, 'all', { mode: 'ignored', reason: 'a computation: it stores nothing' }),
  exempt(FactorsController, ['correct'], { mode: 'ignored', reason: 'a computation with a stored factor: it stores nothing' }),
  exempt(WeighingCorrectionController, ['correct'], { mode: 'ignored', reason: 'a computation: it stores nothing' }),
  exempt(ExportController, ['verifyDigest', 'verifyFile'], { mode: 'ignored', reason: 'a check of a file: it stores nothing' }),
  exempt(SessionsController, ['signIn'], {
    mode: 'ignored',
    reason: 'sign-in has no caller to scope a key to, and its response holds the new session token',
  }),
  exempt(SessionsController, ['signOut'], { mode: 'ignored', reason: 'it ends the session a retry would authenticate with' }),
  exempt(SessionsController, ['changePassword'], {
    mode: 'refused',
    reason: 'a wrong current password must count against the sign-in limit even though the request fails',
  }),
  exempt(CredentialsController, ['create', 'rotate'], { mode: 'refused', reason: SECRET_ONCE }),
  exempt(WebhookController, ['create', 'rotateSecret'], { mode: 'refused', reason: SECRET_ONCE }),
  exempt(CalendarFeedController, ['create'], { mode: 'refused', reason: SECRET_ONCE }),
  exempt(PeopleController, ['create'], { mode: 'refused', reason: SECRET_ONCE }),
  exempt(ExportController, ['create'], {
    mode: 'refused',
    reason: 'the export is streamed as it is read and recorded with its digest; ask for it again, the same request gives the same bytes',
  }),
  exempt(VesselController, ['import'], {
    mode: 'refused',
    reason:
      'the import runs in a bulk transaction of its own; a file sent again is refused as a whole because its asset tags are registered',
  }),
];

const WRITE_METHODS = new Set<RequestMethod>([RequestMethod.POST, RequestMethod.PUT, RequestMethod.PATCH, RequestMethod.DELETE]);

/** What a keyed route documents in OpenAPI. */
export const TakesIdempotencyKey = (): MethodDecorator => (target, key, descriptor) => {
  ApiHeader({
    name: IDEMPOTENCY_HEADER,
    required: false,
    description:
      'Any string of 1–128 letters, digits and . _ : ~ + / = - (a UUID will do), new for each write. A retry with the same key ' +
      'by the same caller within the keys’ lifetime (24 h by default) gets the first response again (status, body, ETag, ' +
      'Location, and Idempotent-Replayed: true) and writes nothing twice, also when the two arrive together. Only successful ' +
      'responses are kept: after a 4xx the key may be used for the corrected request.',
    example: '6f1c2d9e-8a0b-4c47-9e21-3b5d7a1f0c88',
  })(target, key, descriptor);
  ApiResponse({ status: 409, description: 'idempotency-key-in-use: a request with this key is still running; retry shortly' })(
    target,
    key,
    descriptor,
  );
  ApiResponse({ status: 422, description: 'idempotency-key-reused: the key was used for a different request' })(target, key, descriptor);
};

/**
 * Binds {@link IdempotencyInterceptor} to every POST, PUT, PATCH and DELETE route of the
 * application (except those exempted as `ignored`) and documents the header. Runs on the
 * controller classes before the application is created, so Nest resolves the interceptor
 * per application like any other; calling it again changes nothing. It goes first in the
 * route's list, outermost, so it records the answer after serialisation, ETag and Location.
 */
export function applyIdempotencyKeys(root: DynamicModule): void {
  const exemptions = new Map<Type, Map<string, Exemption>>();
  for (const { controller, methods, exemption } of EXEMPTIONS) {
    const names = methods === 'all' ? writeHandlers(controller).map(([name]) => name) : methods;
    const byName = exemptions.get(controller) ?? new Map<string, Exemption>();
    for (const name of names) byName.set(name, exemption);
    exemptions.set(controller, byName);
  }
  for (const controller of controllersOf(root)) {
    const byName = exemptions.get(controller);
    for (const [name, handler, descriptor] of writeHandlers(controller)) {
      const exemption = byName?.get(name);
      byName?.delete(name);
      if (exemption) Reflect.defineMetadata(EXEMPTION_METADATA, exemption, handler);
      if (exemption?.mode === 'ignored') continue;
      const bound = (Reflect.getMetadata(INTERCEPTORS_METADATA, handler) as unknown[] | undefined) ?? [];
      if (bound.includes(IdempotencyInterceptor)) continue;
      Reflect.defineMetadata(INTERCEPTORS_METADATA, [IdempotencyInterceptor, ...bound], handler);
      if (!exemption) TakesIdempotencyKey()(controller.prototype as object, name, descriptor);
    }
    if (byName && byName.size > 0) {
      throw new Error(`Idempotency exemptions name no write route: ${controller.name}.${[...byName.keys()].join(', ')}`);
    }
  }
}

function writeHandlers(controller: Type): [string, object, PropertyDescriptor][] {
  const prototype = controller.prototype as object;
  return Object.getOwnPropertyNames(prototype).flatMap((name): [string, object, PropertyDescriptor][] => {
    const descriptor = Object.getOwnPropertyDescriptor(prototype, name);
    const handler = descriptor?.value as object | undefined;
    if (!descriptor || name === 'constructor' || typeof handler !== 'function') return [];
    const method = Reflect.getMetadata(METHOD_METADATA, handler) as RequestMethod | undefined;
    return method !== undefined && WRITE_METHODS.has(method) ? [[name, handler, descriptor]] : [];
  });
}

function controllersOf(root: DynamicModule): Type[] {
  const found = new Set<Type>();
  const seen = new Set<unknown>();
  const visit = (module: unknown): void => {
    if (!module || seen.has(module)) return;
    seen.add(module);
    const dynamic = module as Partial<DynamicModule>;
    const type = (dynamic.module ?? module) as Type;
    const controllers = [
      ...((Reflect.getMetadata(MODULE_METADATA.CONTROLLERS, type) as Type[] | undefined) ?? []),
      ...(dynamic.controllers ?? []),
    ];
    for (const c of controllers) found.add(c);
    for (const m of [
      ...((Reflect.getMetadata(MODULE_METADATA.IMPORTS, type) as unknown[] | undefined) ?? []),
      ...(dynamic.imports ?? []),
    ]) {
      visit(m);
    }
  };
  visit(root);
  return [...found];
}
