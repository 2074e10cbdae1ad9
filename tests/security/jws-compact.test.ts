import { describe, expect, it } from 'vitest';
import { decodeCompactJws, MAX_TOKEN_LENGTH } from '../../src/security/jws-compact.js';
import { SPEC_HEADER, SPEC_PAYLOAD, SPEC_TOKEN } from '../fixtures/security/spec-jwt-example.js';

const b64 = (value: unknown): string => Buffer.from(JSON.stringify(value)).toString('base64url');

describe('decodeCompactJws', () => {
  it('decodes the specification example token into its header and payload', () => {
    // CDS Hooks 2.0 §Trusting CDS Clients › Example prints this header and payload beside the token
    const decoded = decodeCompactJws(SPEC_TOKEN);
    expect(decoded?.header).toStrictEqual(SPEC_HEADER);
    expect(decoded?.payload).toStrictEqual(SPEC_PAYLOAD);
    // RFC 7518 §3.4: an ES384 signature is 96 bytes (R and S, 48 each)
    expect(decoded?.signature.length).toBe(96);
    expect(decoded?.signingInput.toString()).toBe(SPEC_TOKEN.split('.').slice(0, 2).join('.'));
  });

  it.each([
    ['two segments', `${b64({ alg: 'ES384' })}.${b64({})}`],
    ['four segments', `${b64({ alg: 'ES384' })}.${b64({})}.AA.AA`],
    // RFC 7515 §2: base64url without padding
    ['padding', `${b64({ alg: 'ES384' })}=.${b64({})}.AA`],
    ['standard base64 characters', `${b64({ alg: 'ES384' })}.${b64({})}.A+/A`],
    ['a header that is not JSON', `bm90IGpzb24.${b64({})}.AA`],
    // RFC 7519 §7.2 step 10: the claims set must be a JSON object
    ['a payload that is an array', `${b64({ alg: 'ES384' })}.${b64(['iss'])}.AA`],
    ['a header that is null', `${b64(null)}.${b64({})}.AA`],
    ['whitespace', ` ${b64({ alg: 'ES384' })}.${b64({})}.AA`],
  ])('refuses a token with %s', (_name, token) => {
    expect(decodeCompactJws(token)).toBeUndefined();
  });

  describe('edge cases', () => {
    it('decodes an unsecured JWS (empty signature, RFC 7519 §6.1) so the algorithm check can name it', () => {
      const decoded = decodeCompactJws(`${b64({ alg: 'none' })}.${b64({ iss: 'x' })}.`);
      expect([decoded?.header, decoded?.signature.length]).toStrictEqual([{ alg: 'none' }, 0]);
    });

    it('refuses a token longer than the cap before decoding it', () => {
      const long = `${b64({ alg: 'ES384' })}.${b64({ pad: 'x'.repeat(MAX_TOKEN_LENGTH) })}.AA`;
      expect(decodeCompactJws(long)).toBeUndefined();
    });

    it('keeps the last of duplicate member names, as JSON.parse does (RFC 7515 §5.2 allows it)', () => {
      const header = Buffer.from('{"alg":"none","alg":"ES384"}').toString('base64url');
      expect(decodeCompactJws(`${header}.${b64({})}.AA`)?.header).toStrictEqual({ alg: 'ES384' });
    });
  });
});
