// API token secrets: generation, hashing, and reading them from an Authorization header.
//
// A secret is 32 bytes from the operating system's CSPRNG (256 bits), shown once and stored only as its
// SHA-256 digest. A fast hash is enough here because the secret is not chosen by a person: a slow,
// salted key-derivation function defends low-entropy passwords against guessing, which a 256-bit random
// value already defeats (NIST SP 800-63B, section 5.1.2.2 on look-up secrets: secrets with at least 112
// bits of entropy may be hashed with an approved one-way function; OWASP Password Storage Cheat Sheet
// makes the same distinction between passwords and random tokens — both from memory).
import { createHash, randomBytes, timingSafeEqual } from 'node:crypto';

/** Prefix of every token secret, so a leaked one is recognisable in logs and secret scanners. */
export const TOKEN_PREFIX = 'eqt_';
export const TOKEN_BYTES = 32;

export function generateTokenSecret(): string {
  return TOKEN_PREFIX + randomBytes(TOKEN_BYTES).toString('base64url');
}

/** Lower-case hex SHA-256 (FIPS 180-4) of the secret as sent. */
export function hashTokenSecret(secret: string): string {
  return createHash('sha256').update(secret, 'utf8').digest('hex');
}

/** Constant-time comparison of two hex digests of equal length. */
export function sameDigest(a: string, b: string): boolean {
  const x = Buffer.from(a, 'hex');
  const y = Buffer.from(b, 'hex');
  return x.length === y.length && x.length > 0 && timingSafeEqual(x, y);
}

export class AuthorizationHeaderError extends Error {}

/**
 * The token in an `Authorization: Bearer <token>` header (RFC 6750 §2.1); null when there is no header.
 * Throws AuthorizationHeaderError for a header that is present but not a bearer token.
 */
export function bearerToken(header: string | undefined | null): string | null {
  if (header === undefined || header === null || header.trim() === '') return null;
  const match = /^Bearer\s+([A-Za-z0-9._~+/=-]+)\s*$/i.exec(header.trim());
  if (!match) throw new AuthorizationHeaderError('The Authorization header must read "Bearer <token>".');
  return match[1];
}
