import type { LabRole, RegistryRole } from '../auth/actor';
import type { Person } from './people.repository';
import type { PERSON_STATUSES, PersonView } from './people.schemas';

/** The wire form of a person: never a password or its hash. */
export function presentPerson(p: Person): PersonView {
  return {
    id: p.id,
    email: p.email,
    displayName: p.displayName,
    registryRole: p.registryRole as RegistryRole | null,
    status: p.status as (typeof PERSON_STATUSES)[number],
    mustChangePassword: p.mustChangePassword,
    passwordSetAt: p.passwordSetAt?.toISOString() ?? null,
    labs: p.memberships.map((m) => ({ labId: m.labId, role: m.labRole as LabRole, externalRef: m.externalRef })),
    version: p.version,
    createdAt: p.createdAt.toISOString(),
    updatedAt: p.updatedAt.toISOString(),
  };
}

/** What the audit trail keeps of a person. */
export const personSnapshot = (p: Person) => ({
  email: p.email,
  displayName: p.displayName,
  registryRole: p.registryRole,
  status: p.status,
});
