import { describe, expect, it } from 'vitest';
import { checkCdsClaims, MAX_JTI_LENGTH, type ClaimExpectations } from '../../src/security/jwt-claims.js';

const NOW_S = 1_741_942_800; // 2025-03-14T09:00:00Z, the Larkspur Bay test clock
const AUD = 'https://cds.larkspur-bay.example/cds-services/oxygen-order-sign';

const expect0: ClaimExpectations = {
  nowS: NOW_S,
  audience: AUD,
  tenants: undefined,
  // common practice: 60 s leeway; CDS Hooks best practices: client JWTs live at most 1 h
  limits: { clockSkewS: 60, maxLifetimeS: 3600 },
};

const good = { iss: 'https://ehr.larkspur-bay.example', aud: AUD, iat: NOW_S - 10, exp: NOW_S + 290, jti: 'lbgh-jti-1' };

describe('checkCdsClaims', () => {
  it('accepts a token as the sandbox client makes them (exp = iat + 300)', () => {
    // CDS Hooks reference (sandbox): exp = iat + 300
    expect(checkCdsClaims(good, expect0)).toStrictEqual({
      kind: 'ok',
      claims: { expS: NOW_S + 290, iatS: NOW_S - 10, jti: 'lbgh-jti-1', tenant: undefined },
    });
  });

  it.each<[string, Record<string, unknown>, string]>([
    // RFC 7519 §4.1.4: the current time MUST be before exp (leeway allowed)
    ['no exp', { exp: undefined }, 'exp-missing'],
    ['exp as a string', { exp: String(NOW_S + 60) }, 'exp-missing'],
    // CDS Hooks 2.0 §Trusting CDS Clients: iat is REQUIRED
    ['no iat', { iat: undefined }, 'iat-missing'],
    // common practice: reject far-future iat (cds-hooks.md §7, implementer choice)
    ['iat past the leeway', { iat: NOW_S + 61, exp: NOW_S + 300 }, 'iat-in-future'],
    // CDS Hooks best practices: JWT lifetime at most 1 h
    ['a lifetime over an hour', { iat: NOW_S - 10, exp: NOW_S - 10 + 3601 }, 'lifetime-too-long'],
    ['exp before iat', { iat: NOW_S + 30, exp: NOW_S + 20 }, 'lifetime-invalid'],
    // CDS Hooks 2.0: aud must be the URL of the endpoint being invoked
    ['another service as aud', { aud: 'https://cds.larkspur-bay.example/cds-services/oxygen-order-select' }, 'aud-mismatch'],
    ['the discovery URL as aud', { aud: 'https://cds.larkspur-bay.example/cds-services' }, 'aud-mismatch'],
    ['no aud', { aud: undefined }, 'aud-mismatch'],
    ['an empty aud array', { aud: [] }, 'aud-mismatch'],
    // CDS Hooks 2.0: jti is REQUIRED (replay protection)
    ['no jti', { jti: undefined }, 'jti-missing'],
    ['an empty jti', { jti: '' }, 'jti-missing'],
    ['a numeric jti', { jti: 42 }, 'jti-missing'],
    ['a tenant that is not a string', { tenant: 7 }, 'tenant-invalid'],
  ])('refuses %s', (_name, change, reason) => {
    expect(checkCdsClaims({ ...good, ...change }, expect0)).toStrictEqual({ kind: 'refused', reason });
  });

  it.each([
    // RFC 7519 §4.1.3: aud may be a string or an array holding the recipient
    ['a string', AUD],
    ['a one-element array', [AUD]],
    ['an array with another audience too', ['https://other.example/cds-services/x', AUD]],
  ])('accepts aud as %s', (_name, aud) => {
    expect(checkCdsClaims({ ...good, aud }, expect0).kind).toBe('ok');
  });

  it('checks the tenant against the client list when the client has one', () => {
    const withTenants = { ...expect0, tenants: ['north-campus'] };
    expect(checkCdsClaims({ ...good, tenant: 'north-campus' }, withTenants).kind).toBe('ok');
    expect(checkCdsClaims({ ...good, tenant: 'south-campus' }, withTenants)).toStrictEqual({ kind: 'refused', reason: 'tenant-not-allowed' });
    expect(checkCdsClaims(good, withTenants)).toStrictEqual({ kind: 'refused', reason: 'tenant-not-allowed' });
    expect(checkCdsClaims({ ...good, tenant: 'south-campus' }, expect0).kind).toBe('ok');
  });

  describe('the validity window, nbf and exp with the leeway', () => {
    it.each<[string, Record<string, unknown>, string]>([
      // RFC 7519 §4.1.4: the current time MUST be before exp, with a small leeway (60 s here);
      // refused from now = exp + leeway on, the boundary the service kept from jsonwebtoken 9
      ['exp a millisecond inside the leeway', { iat: NOW_S - 300, exp: NOW_S - 60 + 0.001 }, 'ok'],
      ['exp exactly at the end of the leeway', { iat: NOW_S - 300, exp: NOW_S - 60 }, 'expired'],
      ['exp long past', { iat: NOW_S - 900, exp: NOW_S - 600 }, 'expired'],
      // RFC 7519 §4.1.5: not before nbf, with the same leeway; nbf exactly now + leeway is taken
      ['nbf exactly at the end of the leeway', { nbf: NOW_S + 60 }, 'ok'],
      ['nbf a millisecond past the leeway', { nbf: NOW_S + 60 + 0.001 }, 'nbf-in-future'],
      ['nbf in the past', { nbf: NOW_S - 3600 }, 'ok'],
      // RFC 7519 §2: NumericDate is a JSON number; anything else present is refused
      ['nbf as a string', { nbf: String(NOW_S) }, 'nbf-in-future'],
      ['nbf null', { nbf: null }, 'nbf-in-future'],
      ['nbf as an array', { nbf: [NOW_S] }, 'nbf-in-future'],
      ['exp as a string', { exp: String(NOW_S + 60) }, 'exp-missing'],
      ['exp null', { exp: null }, 'exp-missing'],
      ['exp true', { exp: true }, 'exp-missing'],
      // nbf is looked at before exp, as it always was: the log keeps the same reason
      ['a bad nbf and a past exp', { nbf: 'soon', iat: NOW_S - 900, exp: NOW_S - 600 }, 'nbf-in-future'],
      ['a future nbf and an exp that is not a number', { nbf: NOW_S + 600, exp: 'later' }, 'nbf-in-future'],
      // the window comes before the claims CDS Hooks adds
      ['an expired token with no jti', { iat: NOW_S - 900, exp: NOW_S - 600, jti: undefined }, 'expired'],
    ])('%s', (_name, change, verdict) => {
      const outcome = checkCdsClaims({ ...good, ...change }, expect0);
      expect(outcome.kind === 'ok' ? 'ok' : outcome.reason).toBe(verdict);
    });
  });

  describe('edge cases', () => {
    it('allows iat the leeway into the future and not a second more', () => {
      expect(checkCdsClaims({ ...good, iat: NOW_S + 60, exp: NOW_S + 120 }, expect0).kind).toBe('ok');
      expect(checkCdsClaims({ ...good, iat: NOW_S + 61, exp: NOW_S + 120 }, expect0)).toStrictEqual({ kind: 'refused', reason: 'iat-in-future' });
    });

    it('accepts a lifetime of exactly the maximum', () => {
      expect(checkCdsClaims({ ...good, iat: NOW_S - 10, exp: NOW_S - 10 + 3600 }, expect0).kind).toBe('ok');
    });

    it('accepts non-integer NumericDates (RFC 7519 §2)', () => {
      expect(checkCdsClaims({ ...good, iat: NOW_S - 0.5, exp: NOW_S + 10.25 }, expect0).kind).toBe('ok');
    });

    it('refuses a jti too long to be a nonce', () => {
      expect(checkCdsClaims({ ...good, jti: 'j'.repeat(MAX_JTI_LENGTH + 1) }, expect0)).toStrictEqual({
        kind: 'refused',
        reason: 'jti-missing',
      });
    });

    it('refuses an aud array holding a non-string', () => {
      expect(checkCdsClaims({ ...good, aud: [AUD, 5] }, expect0)).toStrictEqual({ kind: 'refused', reason: 'aud-mismatch' });
    });
  });
});
