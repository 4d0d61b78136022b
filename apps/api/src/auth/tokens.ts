import { createHash, randomBytes, timingSafeEqual } from 'node:crypto';

/** Session tokens: 256 random bits, prefixed so a leaked token is recognisable. */
export const SESSION_PREFIX = 'rs_';
/** Service credential keys: `rk_<keyId>.<secret>`; the secret carries 256 random bits. */
export const CREDENTIAL_PREFIX = 'rk_';

/** Bytes as Prisma stores them (a plain Uint8Array over its own ArrayBuffer). */
export type HashBytes = Uint8Array<ArrayBuffer>;

export const sha256 = (text: string): HashBytes => new Uint8Array(createHash('sha256').update(text, 'utf8').digest());

export function newSessionToken(): { token: string; hash: HashBytes } {
  const token = `${SESSION_PREFIX}${randomBytes(32).toString('base64url')}`;
  return { token, hash: sha256(token) };
}

export function newCredentialKey(): { key: string; keyId: string; secretHash: HashBytes } {
  const keyId = randomBytes(8).toString('hex');
  const secret = randomBytes(32).toString('base64url');
  return { key: `${CREDENTIAL_PREFIX}${keyId}.${secret}`, keyId, secretHash: sha256(secret) };
}

const CREDENTIAL_SHAPE = /^rk_([0-9a-f]{16})\.([A-Za-z0-9_-]{43})$/;
const SESSION_SHAPE = /^rs_[A-Za-z0-9_-]{43}$/;

export type ParsedBearer = { kind: 'session'; hash: HashBytes } | { kind: 'credential'; keyId: string; secretHash: HashBytes } | null;

/** Recognises a bearer value without touching the database; null when it cannot be ours. */
export function parseBearer(header: string | undefined): ParsedBearer {
  if (!header) return null;
  const match = /^Bearer\s+(\S+)$/i.exec(header.trim());
  const value = match?.[1];
  if (!value || value.length > 200) return null;
  if (SESSION_SHAPE.test(value)) return { kind: 'session', hash: sha256(value) };
  const cred = CREDENTIAL_SHAPE.exec(value);
  if (cred?.[1] && cred[2]) return { kind: 'credential', keyId: cred[1], secretHash: sha256(cred[2]) };
  return null;
}

export const sameHash = (a: Uint8Array, b: Uint8Array): boolean => a.length === b.length && timingSafeEqual(a, b);
