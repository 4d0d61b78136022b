import { randomBytes, randomInt } from 'node:crypto';

import { Algorithm, hash, verify } from '@node-rs/argon2';

/**
 * argon2id at the OWASP ASVS minimum: 19 MiB of memory, two passes, one lane.
 * Stored hashes carry their parameters (PHC string), so raising these later
 * rehashes each password at its owner's next sign-in.
 */
export const ARGON2_PARAMETERS = { algorithm: Algorithm.Argon2id, memoryCost: 19_456, timeCost: 2, parallelism: 1 } as const;

/** How every hash made with the current parameters begins. */
export const CURRENT_HASH_PREFIX = `$argon2id$v=19$m=${ARGON2_PARAMETERS.memoryCost},t=${ARGON2_PARAMETERS.timeCost},p=${ARGON2_PARAMETERS.parallelism}$`;

export function hashPassword(password: string): Promise<string> {
  return hash(password, ARGON2_PARAMETERS);
}

/** False for a wrong password and for a stored value that is not a hash we can read. */
export async function verifyPassword(storedHash: string, password: string): Promise<boolean> {
  try {
    return await verify(storedHash, password);
  } catch {
    return false;
  }
}

export const needsRehash = (storedHash: string): boolean => !storedHash.startsWith(CURRENT_HASH_PREFIX);

let dummy: Promise<string> | undefined;

/**
 * Spends the same time as checking a real password, for unknown emails and
 * people who cannot sign in, so response times do not tell who exists.
 */
export async function verifyAgainstDummy(password: string): Promise<false> {
  dummy ??= hashPassword(randomBytes(32).toString('base64url'));
  await verifyPassword(await dummy, password);
  return false;
}

/** Letters and digits that cannot be confused when read aloud or copied from a screen. */
const ALPHABET = 'ABCDEFGHJKLMNPQRSTUVWXYZabcdefghijkmnopqrstuvwxyz23456789';

/** A one-time password for a new account: 20 random characters (about 115 bits) in groups of five. */
export function newInitialPassword(): string {
  const chars = Array.from({ length: 20 }, () => ALPHABET[randomInt(ALPHABET.length)]);
  return [0, 5, 10, 15].map((i) => chars.slice(i, i + 5).join('')).join('-');
}
