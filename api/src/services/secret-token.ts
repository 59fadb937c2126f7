import { createHash, randomBytes } from 'node:crypto';

/** 32 random bytes: 256 bits, well past the 128 an unguessable link needs. */
const SECRET_BYTES = 32;

/** Base64url of 32 bytes, without padding: what links carry. */
export const SECRET_PATTERN = /^[A-Za-z0-9_-]{43}$/;

/** The SHA-256 (hex) that is stored and looked up; the secret itself is never kept. */
export function hashSecret(secret: string): string {
  return createHash('sha256').update(secret, 'utf8').digest('hex');
}

/** A fresh secret for a link, and the hash to store. */
export function newSecret(): { secret: string; hash: string } {
  const secret = randomBytes(SECRET_BYTES).toString('base64url');
  return { secret, hash: hashSecret(secret) };
}
