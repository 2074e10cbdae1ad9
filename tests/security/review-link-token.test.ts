import { createHmac } from 'node:crypto';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { checkReviewLinkToken, createReviewLinker, MAX_TOKEN_LENGTH, signReviewLinkToken } from '../../src/security/review-link-token.js';

const SECRET = Buffer.from('0123456789abcdef0123456789abcdef-review', 'utf8');
const CARD = '00000000-0000-4000-8000-000000000001';
const OTHER = '00000000-0000-4000-8000-000000000002';
const NOW_MS = Date.parse('2026-03-14T12:00:00Z');
const IN_A_DAY_S = NOW_MS / 1000 + 86_400;

describe('review link tokens', () => {
  it('open the one advisory they were signed for until they expire', () => {
    const token = signReviewLinkToken(SECRET, CARD, IN_A_DAY_S);
    expect(checkReviewLinkToken(SECRET, token, CARD, NOW_MS)).toStrictEqual({ kind: 'valid', exp: IN_A_DAY_S });
    expect(checkReviewLinkToken(SECRET, token, CARD, IN_A_DAY_S * 1000 - 1).kind).toBe('valid');
  });

  it('are refused for any other advisory', () => {
    const token = signReviewLinkToken(SECRET, CARD, IN_A_DAY_S);
    expect(checkReviewLinkToken(SECRET, token, OTHER, NOW_MS)).toStrictEqual({ kind: 'invalid', reason: 'other-advisory' });
  });

  it('are refused from the second they expire (RFC 7519 §4.1.4: on or after exp)', () => {
    const token = signReviewLinkToken(SECRET, CARD, IN_A_DAY_S);
    expect(checkReviewLinkToken(SECRET, token, CARD, IN_A_DAY_S * 1000)).toStrictEqual({ kind: 'invalid', reason: 'expired' });
  });

  it('are refused when signed with another secret', () => {
    const token = signReviewLinkToken(Buffer.from('another-secret-of-thirty-two-bytes!!', 'utf8'), CARD, IN_A_DAY_S);
    expect(checkReviewLinkToken(SECRET, token, CARD, NOW_MS)).toStrictEqual({ kind: 'invalid', reason: 'bad-signature' });
  });

  it('are refused when the payload is changed to another card or a later expiry, whatever the MAC', () => {
    const token = signReviewLinkToken(SECRET, CARD, IN_A_DAY_S);
    const [, mac] = token.split('.');
    for (const payload of [{ cardUuid: OTHER, exp: IN_A_DAY_S }, { cardUuid: CARD, exp: IN_A_DAY_S + 3600 }]) {
      const forged = `${Buffer.from(JSON.stringify(payload)).toString('base64url')}.${mac ?? ''}`;
      expect(checkReviewLinkToken(SECRET, forged, payload.cardUuid, NOW_MS)).toStrictEqual({ kind: 'invalid', reason: 'bad-signature' });
    }
  });

  it('are refused when any one character is changed', () => {
    const token = signReviewLinkToken(SECRET, CARD, IN_A_DAY_S);
    fc.assert(
      fc.property(fc.nat({ max: token.length - 1 }), fc.constantFrom(...'AZaz09-_.'), (index, character) => {
        fc.pre(token[index] !== character);
        const tampered = token.slice(0, index) + character + token.slice(index + 1);
        expect(checkReviewLinkToken(SECRET, tampered, CARD, NOW_MS).kind).toBe('invalid');
      }),
      { seed: 5, numRuns: 300 },
    );
  });

  it.each([
    ['empty', ''],
    ['no dot', 'abc'],
    ['three parts', 'a.b.c'],
    ['not base64url', 'a+b.c/d'],
    ['too long', 'a'.repeat(MAX_TOKEN_LENGTH + 1)],
  ])('are refused when malformed: %s', (_name, token) => {
    expect(checkReviewLinkToken(SECRET, token, CARD, NOW_MS)).toStrictEqual({ kind: 'invalid', reason: 'malformed' });
  });

  it('refuse a correctly signed payload of the wrong shape', () => {
    const payload = Buffer.from(JSON.stringify({ cardUuid: CARD, exp: '2030-01-01' })).toString('base64url');
    // Signed exactly as the signer signs, so only the shape check can refuse it.
    const mac = createHmac('sha256', SECRET).update(`review-link.v1.${payload}`).digest('base64url');
    expect(checkReviewLinkToken(SECRET, `${payload}.${mac}`, CARD, NOW_MS)).toStrictEqual({ kind: 'invalid', reason: 'malformed' });
  });
});

describe('createReviewLinker', () => {
  it('makes the absolute advisory URL with a token that expires after the configured time', () => {
    const link = createReviewLinker({ baseUrl: () => 'https://cds.larkspur-bay.example', signing: { secret: SECRET, ttlS: 86_400, clock: () => new Date(NOW_MS) } });
    const url = new URL(link(CARD));
    expect(`${url.origin}${url.pathname}`).toBe(`https://cds.larkspur-bay.example/review/advisories/${CARD}`);
    const token = url.searchParams.get('token') ?? '';
    expect(checkReviewLinkToken(SECRET, token, CARD, NOW_MS + 86_399_000).kind).toBe('valid');
    expect(checkReviewLinkToken(SECRET, token, CARD, NOW_MS + 86_400_000)).toStrictEqual({ kind: 'invalid', reason: 'expired' });
  });

  it('leaves the token out when not signing (the loopback demo), and reads the base URL when called', () => {
    let base = 'http://127.0.0.1:0';
    const link = createReviewLinker({ baseUrl: () => base });
    base = 'http://127.0.0.1:8080';
    expect(link('a b/c')).toBe('http://127.0.0.1:8080/review/advisories/a%20b%2Fc');
  });
});
