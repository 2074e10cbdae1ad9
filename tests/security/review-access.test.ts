import { describe, expect, it } from 'vitest';
import { decideReviewAccess, normalisePeerAddress, type ReviewAccessConfig } from '../../src/security/review-access.js';
import { signReviewLinkToken } from '../../src/security/review-link-token.js';

const SECRET = Buffer.alloc(32, 7);
const CARD = '00000000-0000-4000-8000-000000000001';
const NOW_MS = Date.parse('2026-03-14T12:00:00Z');
const PROXY = '10.20.0.5';

const production: ReviewAccessConfig = {
  mode: 'production',
  identityHeader: 'x-authenticated-user',
  proxyAddresses: [PROXY],
  linkSecret: SECRET,
};

function decide(peer: string | undefined, headers: string[], extra: { token?: string; cardUuid?: string } = {}, config = production) {
  return decideReviewAccess(config, { peerAddress: peer, rawHeaders: headers, ...extra }, NOW_MS);
}

describe('decideReviewAccess', () => {
  it('opens everything in the loopback demo when asked for by a loopback name', () => {
    for (const host of ['127.0.0.1:8080', 'localhost:8080', 'localhost', '[::1]:8080']) {
      expect(decide('127.0.0.1', ['Host', host], {}, { mode: 'demo' })).toStrictEqual({ kind: 'allowed', via: 'demo', reviewer: 'demo' });
    }
  });

  it('refuses a demo page asked for by another host name (DNS rebinding), or with no or two Host headers', () => {
    for (const headers of [['Host', 'rebind.attacker.example:8080'], [], ['Host', '127.0.0.1:8080', 'Host', 'rebind.attacker.example']]) {
      expect(decide('127.0.0.1', headers, {}, { mode: 'demo' })).toStrictEqual({ kind: 'denied', reason: 'demo-host-not-loopback' });
    }
  });

  it('accepts the identity header from a configured proxy address, whatever its case', () => {
    expect(decide(PROXY, ['X-Authenticated-User', 'rt.jones@larkspur-bay.example'])).toStrictEqual({
      kind: 'allowed',
      via: 'proxy',
      reviewer: 'rt.jones@larkspur-bay.example',
    });
    expect(decide(`::ffff:${PROXY}`, ['x-authenticated-user', 'rt.jones']).kind).toBe('allowed');
  });

  it('ignores the identity header from any other address, and X-Forwarded-For does not help', () => {
    expect(decide('10.20.0.6', ['X-Authenticated-User', 'rt.jones'])).toStrictEqual({ kind: 'denied', reason: 'not-from-proxy' });
    expect(decide('10.20.0.6', ['X-Authenticated-User', 'rt.jones', 'X-Forwarded-For', PROXY])).toStrictEqual({ kind: 'denied', reason: 'not-from-proxy' });
    expect(decide(undefined, ['X-Authenticated-User', 'rt.jones']).kind).toBe('denied');
  });

  it('refuses a request from the proxy without the header, with it twice, or with an unreadable value', () => {
    expect(decide(PROXY, [])).toStrictEqual({ kind: 'denied', reason: 'no-identity' });
    expect(decide(PROXY, ['X-Authenticated-User', 'rt.jones', 'x-authenticated-user', 'admin'])).toStrictEqual({ kind: 'denied', reason: 'identity-unreadable' });
    for (const value of ['', '   ', 'a\u0000b', 'x'.repeat(257), 'r\u00e9viewer']) {
      expect(decide(PROXY, ['X-Authenticated-User', value])).toStrictEqual({ kind: 'denied', reason: 'identity-unreadable' });
    }
  });

  it('refuses every list and summary request when no proxy is configured', () => {
    const linksOnly: ReviewAccessConfig = { mode: 'production', proxyAddresses: [], linkSecret: SECRET };
    expect(decide('127.0.0.1', ['X-Authenticated-User', 'rt.jones'], {}, linksOnly)).toStrictEqual({ kind: 'denied', reason: 'not-from-proxy' });
  });

  it('opens one advisory with its link token, from any address', () => {
    const token = signReviewLinkToken(SECRET, CARD, NOW_MS / 1000 + 3600);
    expect(decide('192.0.2.44', [], { token, cardUuid: CARD })).toStrictEqual({ kind: 'allowed', via: 'link', reviewer: 'link' });
  });

  it('refuses a link token on the list (no advisory named), for another advisory, expired or tampered', () => {
    const token = signReviewLinkToken(SECRET, CARD, NOW_MS / 1000 + 3600);
    expect(decide('192.0.2.44', [], { token })).toStrictEqual({ kind: 'denied', reason: 'not-from-proxy' });
    expect(decide('192.0.2.44', [], { token, cardUuid: '00000000-0000-4000-8000-000000000002' })).toStrictEqual({ kind: 'denied', reason: 'link-other-advisory' });
    const expired = signReviewLinkToken(SECRET, CARD, NOW_MS / 1000 - 1);
    expect(decide('192.0.2.44', [], { token: expired, cardUuid: CARD })).toStrictEqual({ kind: 'denied', reason: 'link-expired' });
    expect(decide('192.0.2.44', [], { token: `${token}x`, cardUuid: CARD })).toStrictEqual({ kind: 'denied', reason: 'link-bad-signature' });
  });

  it('lets a signed-in reviewer open an advisory whatever the token says', () => {
    expect(decide(PROXY, ['X-Authenticated-User', 'rt.jones'], { token: 'junk', cardUuid: CARD }).kind).toBe('allowed');
  });
});

describe('normalisePeerAddress', () => {
  it.each([
    ['::ffff:10.0.0.5', '10.0.0.5'],
    ['10.0.0.5', '10.0.0.5'],
    ['2001:DB8::1', '2001:db8::1'],
    ['::1', '::1'],
  ])('%s is %s', (given, expected) => {
    expect(normalisePeerAddress(given)).toBe(expected);
  });
});
