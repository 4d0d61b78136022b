import { dictionary } from '@zxcvbn-ts/language-common';

export const PASSWORD_MIN_LENGTH = 12;
export const PASSWORD_MAX_LENGTH = 128;

/** The common-password list of zxcvbn-ts (about 49,000 leaked passwords), lower-cased. */
let common: Set<string> | undefined;
const commonPasswords = (): Set<string> => (common ??= new Set(dictionary['passwords-common'].map((p) => p.toLowerCase())));

/** Length in characters as a person counts them (code points, not UTF-16 units). */
const lengthOf = (text: string): number => [...text].length;

/**
 * Why a new password is refused, or null when it is acceptable. Rules (NIST SP
 * 800-63B style): 12 to 128 characters, not a known common password (also not one
 * with digits or symbols tacked on), not built on the person's email name.
 */
export function passwordProblem(password: string, email: string): string | null {
  const length = lengthOf(password);
  if (length < PASSWORD_MIN_LENGTH) return `must be at least ${PASSWORD_MIN_LENGTH} characters`;
  if (length > PASSWORD_MAX_LENGTH) return `must be at most ${PASSWORD_MAX_LENGTH} characters`;
  const lower = password.toLowerCase();
  const stem = lower.replace(/[\p{N}\p{P}\p{S}\s]+$/u, '');
  if (commonPasswords().has(lower) || (stem.length >= 4 && commonPasswords().has(stem))) {
    return 'is a commonly used password; choose a longer phrase of unrelated words';
  }
  const localPart = email.toLowerCase().split('@')[0] ?? '';
  if (localPart.length > 0 && (lower === localPart || (localPart.length >= 4 && lower.includes(localPart)))) {
    return 'must not contain your email name';
  }
  if (new Set(lower).size < 4) return 'uses too few different characters';
  return null;
}
