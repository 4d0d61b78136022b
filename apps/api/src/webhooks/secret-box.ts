import { createCipheriv, createDecipheriv, createHash, randomBytes } from 'node:crypto';

/** Bytes as Prisma stores them. */
type Bytes = Uint8Array<ArrayBuffer>;

const NONCE_BYTES = 12;
const TAG_BYTES = 16;

export interface SealedSecret {
  /** nonce (12 bytes) || GCM tag (16 bytes) || ciphertext. */
  readonly sealed: Bytes;
  /** Fingerprint of the key that sealed it (first 8 bytes of its SHA-256, hex). */
  readonly keyRef: string;
}

/** Thrown when a sealed secret cannot be opened: another key, or the bytes were changed. */
export class SealedSecretError extends Error {
  override readonly name = 'SealedSecretError';
}

/**
 * Seals webhook signing secrets at rest with AES-256-GCM under the configured
 * key. The row id is the additional authenticated data, so a sealed secret
 * copied onto another row does not open.
 */
export class SecretBox {
  private readonly key: Buffer;
  readonly keyRef: string;

  constructor(keyBase64: string) {
    this.key = Buffer.from(keyBase64, 'base64');
    if (this.key.length !== 32) throw new Error('The webhook secret key must be 32 bytes.');
    this.keyRef = createHash('sha256').update(this.key).digest('hex').slice(0, 16);
  }

  seal(secret: string, boundTo: string): SealedSecret {
    const nonce = randomBytes(NONCE_BYTES);
    const cipher = createCipheriv('aes-256-gcm', this.key, nonce);
    cipher.setAAD(Buffer.from(boundTo, 'utf8'));
    const body = Buffer.concat([cipher.update(secret, 'utf8'), cipher.final()]);
    const sealed = Buffer.concat([nonce, cipher.getAuthTag(), body]);
    return { sealed: new Uint8Array(sealed), keyRef: this.keyRef };
  }

  open(sealed: Uint8Array, keyRef: string, boundTo: string): string {
    if (keyRef !== this.keyRef) {
      throw new SealedSecretError('the signing secret was sealed under another WEBHOOK_SECRET_KEY; rotate the secret');
    }
    const bytes = Buffer.from(sealed);
    if (bytes.length <= NONCE_BYTES + TAG_BYTES) throw new SealedSecretError('the sealed signing secret is damaged');
    try {
      const decipher = createDecipheriv('aes-256-gcm', this.key, bytes.subarray(0, NONCE_BYTES));
      decipher.setAAD(Buffer.from(boundTo, 'utf8'));
      decipher.setAuthTag(bytes.subarray(NONCE_BYTES, NONCE_BYTES + TAG_BYTES));
      return Buffer.concat([decipher.update(bytes.subarray(NONCE_BYTES + TAG_BYTES)), decipher.final()]).toString('utf8');
    } catch {
      throw new SealedSecretError('the sealed signing secret does not open with this key (changed or damaged)');
    }
  }
}
