/** Registry-wide roles: administrators change everything, auditors read everything and change nothing. */
export const REGISTRY_ROLES = ['administrator', 'auditor'] as const;
export type RegistryRole = (typeof REGISTRY_ROLES)[number];

/** Lab roles: managers own the lab's inventory, approvals and policies; analysts read it and record their own work. */
export const LAB_ROLES = ['manager', 'analyst'] as const;
export type LabRole = (typeof LAB_ROLES)[number];

/** What another system's credential may do. */
export const SCOPES = ['factors:read', 'corrections:write', 'calculations:run', 'inventory:read'] as const;
export type Scope = (typeof SCOPES)[number];

export interface PersonActor {
  readonly kind: 'person';
  readonly id: string;
  readonly email: string;
  readonly displayName: string;
  readonly registryRole: RegistryRole | null;
  /** Lab id → the person's role there. */
  readonly labs: ReadonlyMap<string, LabRole>;
  readonly sessionId: string;
  /** Signed in with a one-time password: only the password change is open until it is replaced. */
  readonly mustChangePassword: boolean;
}

export interface CredentialActor {
  readonly kind: 'credential';
  readonly id: string;
  readonly name: string;
  readonly scopes: ReadonlySet<Scope>;
  readonly labs: ReadonlySet<string> | 'all';
}

export type Actor = PersonActor | CredentialActor;

/** Who is asking, and the request's id, handed from controllers to services. */
export interface RequestContext {
  readonly actor: Actor;
  readonly requestId: string;
  readonly clientAddress: string;
}

/** A change made by the service itself (scheduler, start-up), for audit entries. */
export interface SystemContext {
  readonly actor: { readonly kind: 'system' | 'anonymous'; readonly id?: undefined };
  readonly requestId: string | null;
}

export type AuditContext = RequestContext | SystemContext;
