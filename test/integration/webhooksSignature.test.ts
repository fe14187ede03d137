// Webhook signatures and retry delays (pure functions).
import { describe, expect, test } from 'vitest';
import { hmacSha256Hex, signatureOf, signedHeaders, verifySignature, SIGNATURE_HEADER, TIMESTAMP_HEADER } from '../../src/alerts/signature.ts';
import { backoffDelayMs, BackoffInputError } from '../../src/alerts/backoff.ts';

describe('HMAC-SHA256', () => {
  test('RFC 4231 test case 2 (key "Jefe")', () => {
    // RFC 4231 §4.3, HMAC-SHA-256 of "what do ya want for nothing?" with key "Jefe".
    expect(hmacSha256Hex('Jefe', 'what do ya want for nothing?')).toBe('5bdcc146bf60754e6a042426089575c75a003f089d2739839dec58b964ec3843');
    // The message may come in parts: the MAC is of their concatenation.
    expect(hmacSha256Hex('Jefe', 'what do ya ', 'want for nothing?')).toBe('5bdcc146bf60754e6a042426089575c75a003f089d2739839dec58b964ec3843');
  });
  test('the signature covers "<timestamp>.<body>"', () => {
    expect(signatureOf('s3cret', 1700000000, '{"a":1}')).toBe(`sha256=${hmacSha256Hex('s3cret', '1700000000.{"a":1}')}`);
  });
});

describe('verification', () => {
  const secret = 'eqwh_test-secret';
  const body = '{"event":"alert.raised","id":"alert.raised:7"}';
  const now = new Date('2025-05-01T12:00:00Z');
  const headers = signedHeaders(secret, body, now);
  const input = { secret, body, signature: headers[SIGNATURE_HEADER], timestamp: headers[TIMESTAMP_HEADER], now };
  test('accepts what was signed', () => {
    expect(headers[TIMESTAMP_HEADER]).toBe(String(Date.parse('2025-05-01T12:00:00Z') / 1000));
    expect(verifySignature(input)).toEqual({ ok: true });
    expect(verifySignature({ ...input, body: Buffer.from(body) })).toEqual({ ok: true });
  });
  test('refuses a changed body, another secret, a changed timestamp, a stale or malformed one', () => {
    expect(verifySignature({ ...input, body: body.replace('7', '8') })).toEqual({ ok: false, reason: 'mismatch' });
    expect(verifySignature({ ...input, secret: 'other' })).toEqual({ ok: false, reason: 'mismatch' });
    expect(verifySignature({ ...input, timestamp: String(Number(input.timestamp) + 1) })).toEqual({ ok: false, reason: 'mismatch' });
    expect(verifySignature({ ...input, now: new Date(now.getTime() + 301_000) })).toEqual({ ok: false, reason: 'stale' });
    expect(verifySignature({ ...input, now: new Date(now.getTime() + 299_000) })).toEqual({ ok: true });
    expect(verifySignature({ ...input, signature: 'sha1=abc' })).toEqual({ ok: false, reason: 'malformed' });
    expect(verifySignature({ ...input, signature: undefined })).toEqual({ ok: false, reason: 'missing' });
  });
});

describe('back-off with equal jitter', () => {
  // Equal jitter (Brooker, "Exponential Backoff And Jitter", AWS Architecture Blog, 2015): the delay
  // after failure n lies in [c/2, c] with ceiling c = min(cap, base * 2^(n-1)).
  const options = { baseMs: 1000, maxMs: 60_000 };
  test.each([
    [1, 1000],
    [2, 2000],
    [3, 4000],
    [6, 32_000],
    [7, 60_000],
    [40, 60_000],
  ])('failure %i: ceiling %i ms', (n, ceiling) => {
    expect(backoffDelayMs(n, options, 0)).toBe(ceiling / 2);
    expect(backoffDelayMs(n, options, 0.5)).toBe((3 * ceiling) / 4);
    expect(backoffDelayMs(n, options, 0.999999)).toBeLessThanOrEqual(ceiling);
    expect(backoffDelayMs(n, options, 0.999999)).toBeGreaterThan(ceiling - 1);
  });
  test('grows with every failure until the cap, whatever the jitter', () => {
    for (let n = 1; n < 6; n++) expect(backoffDelayMs(n + 1, options, 0)).toBeGreaterThanOrEqual(backoffDelayMs(n, options, 0.999999));
  });
  test('invalid input', () => {
    expect(() => backoffDelayMs(0, options, 0.5)).toThrow(BackoffInputError);
    expect(() => backoffDelayMs(1, { baseMs: 10, maxMs: 5 }, 0.5)).toThrow(BackoffInputError);
    expect(() => backoffDelayMs(1, options, 1)).toThrow(BackoffInputError);
  });
});
