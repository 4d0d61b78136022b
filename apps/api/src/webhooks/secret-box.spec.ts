import { randomBytes } from 'node:crypto';

import { SealedSecretError, SecretBox } from './secret-box';
import { newWebhookSecret, signatureOf, verifySignature } from './webhook-signature';

describe('sealed webhook secrets', () => {
  const key = randomBytes(32).toString('base64');
  const box = new SecretBox(key);
  const id = '5b0f3c1e-2a4d-4e6f-8a9b-0c1d2e3f4a5b';

  it('opens what it sealed, and the sealed bytes do not hold the secret', () => {
    const secret = newWebhookSecret();
    const sealed = box.seal(secret, id);
    expect(Buffer.from(sealed.sealed).includes(Buffer.from(secret))).toBe(false);
    expect(Buffer.from(sealed.sealed).includes(Buffer.from(secret.slice(4)))).toBe(false);
    expect(box.open(sealed.sealed, sealed.keyRef, id)).toBe(secret);
    // A fresh nonce each time: the same secret never seals to the same bytes.
    expect(Buffer.from(box.seal(secret, id).sealed).equals(Buffer.from(sealed.sealed))).toBe(false);
  });

  it('refuses another key, another row and changed bytes', () => {
    const sealed = box.seal(newWebhookSecret(), id);
    const other = new SecretBox(randomBytes(32).toString('base64'));
    expect(() => other.open(sealed.sealed, sealed.keyRef, id)).toThrow(SealedSecretError);
    expect(() => other.open(sealed.sealed, other.keyRef, id)).toThrow(SealedSecretError);
    expect(() => box.open(sealed.sealed, sealed.keyRef, '00000000-0000-4000-8000-000000000000')).toThrow(SealedSecretError);
    const tampered = new Uint8Array(sealed.sealed);
    tampered[tampered.length - 1]! ^= 1;
    expect(() => box.open(tampered, sealed.keyRef, id)).toThrow(SealedSecretError);
  });

  it('refuses a key that is not 32 bytes', () => {
    expect(() => new SecretBox(randomBytes(16).toString('base64'))).toThrow('32 bytes');
  });

  it('signs timestamp and body with HMAC-SHA256, and the check refuses changes and stale timestamps', () => {
    const body = '{"event":"overdue"}';
    const signature = signatureOf('rwh_a', 1_800_000_000, body);
    expect(verifySignature('rwh_a', { timestamp: '1800000000', signature }, body, 1_800_000_100)).toBe(true);
    expect(verifySignature('rwh_a', { timestamp: '1800000000', signature }, `${body} `, 1_800_000_100)).toBe(false);
    expect(verifySignature('rwh_b', { timestamp: '1800000000', signature }, body, 1_800_000_100)).toBe(false);
    expect(verifySignature('rwh_a', { timestamp: '1800000000', signature }, body, 1_800_000_301)).toBe(false);
  });
});
