// Webhook signatures: HMAC-SHA256 (RFC 2104, FIPS 198-1) with the subscription's secret over
// "<timestamp>.<raw body>", sent as `X-Endquench-Signature: sha256=<hex>` beside
// `X-Endquench-Timestamp: <unix seconds>`. The timestamp is inside the signed text, so a receiver that
// refuses old timestamps also refuses a replayed delivery; the body is signed byte for byte as sent.
import { createHmac, randomBytes, timingSafeEqual } from 'node:crypto';

export const SIGNATURE_HEADER = 'X-Endquench-Signature';
export const TIMESTAMP_HEADER = 'X-Endquench-Timestamp';
export const SIGNATURE_SCHEME = 'sha256';
/** Default tolerance of verifySignature for the timestamp's age, in seconds. */
export const DEFAULT_TOLERANCE_SECONDS = 300;

/** A new subscription secret: 32 random bytes. */
export function generateWebhookSecret(): string {
  return 'eqwh_' + randomBytes(32).toString('base64url');
}

/** HMAC-SHA256 of the parts, concatenated, as lower-case hex. */
export function hmacSha256Hex(key: string | Uint8Array, ...parts: Array<string | Uint8Array>): string {
  const mac = createHmac('sha256', key);
  for (const part of parts) mac.update(part);
  return mac.digest('hex');
}

export function signatureOf(secret: string, timestamp: number, body: string | Uint8Array): string {
  return `${SIGNATURE_SCHEME}=${hmacSha256Hex(secret, `${timestamp}.`, body)}`;
}

/** The two headers to send with a body. */
export function signedHeaders(secret: string, body: string | Uint8Array, now: Date): Record<string, string> {
  const timestamp = Math.floor(now.getTime() / 1000);
  return { [TIMESTAMP_HEADER]: String(timestamp), [SIGNATURE_HEADER]: signatureOf(secret, timestamp, body) };
}

export type VerifyResult = { ok: true } | { ok: false; reason: 'missing' | 'malformed' | 'stale' | 'mismatch' };

export interface VerifyInput {
  secret: string;
  body: string | Uint8Array;
  signature: string | null | undefined;
  timestamp: string | null | undefined;
  now?: Date;
  toleranceSeconds?: number;
}

/** For receivers: checks the signature (constant-time) and that the timestamp is recent. */
export function verifySignature(input: VerifyInput): VerifyResult {
  const { secret, body, signature, timestamp } = input;
  if (!signature || !timestamp) return { ok: false, reason: 'missing' };
  if (!/^\d{1,12}$/.test(timestamp) || !/^sha256=[0-9a-f]{64}$/.test(signature)) return { ok: false, reason: 'malformed' };
  const t = Number(timestamp);
  const now = Math.floor((input.now ?? new Date()).getTime() / 1000);
  if (Math.abs(now - t) > (input.toleranceSeconds ?? DEFAULT_TOLERANCE_SECONDS)) return { ok: false, reason: 'stale' };
  const expected = Buffer.from(signatureOf(secret, t, body));
  const given = Buffer.from(signature);
  return expected.length === given.length && timingSafeEqual(expected, given) ? { ok: true } : { ok: false, reason: 'mismatch' };
}
