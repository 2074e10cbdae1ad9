import { describe, expect, it } from 'vitest';
import { audienceMatches, endpointAudience, parsePublicBaseUrl } from '../../src/security/public-url.js';

const BASE = 'https://cds.example.org';

describe('public URL and audience', () => {
  it.each([
    ['https://cds.example.org', 'https://cds.example.org'],
    ['https://cds.example.org/', 'https://cds.example.org'],
    // WHATWG URL: host lower-cased, default port dropped
    ['HTTPS://CDS.Example.ORG:443/', 'https://cds.example.org'],
    ['https://apps.example.org/oxygen/', 'https://apps.example.org/oxygen'],
  ])('normalises the base %s to %s', (text, base) => {
    expect(parsePublicBaseUrl(text, { requireHttps: true })).toStrictEqual({ kind: 'ok', base });
  });

  it.each([
    // CDS Hooks 2.0 §Trusting CDS Clients › Example: the audiences the spec shows
    ['/cds-services', 'https://cds.example.org/cds-services'],
    ['/cds-services/some-service', 'https://cds.example.org/cds-services/some-service'],
    // cds-hooks.md §7: the feedback URL is the full .../{id}/feedback
    ['/cds-services/some-service/feedback', 'https://cds.example.org/cds-services/some-service/feedback'],
    ['/cds-services/some-service/?debug=1', 'https://cds.example.org/cds-services/some-service'],
  ])('expects the audience of %s to be %s', (path, audience) => {
    expect(endpointAudience(BASE, path)).toBe(audience);
  });

  it('finds the endpoint in aud as a string or an array (RFC 7519 §4.1.3)', () => {
    const expected = 'https://cds.example.org/cds-services/some-service';
    expect(audienceMatches(expected, expected)).toBe(true);
    expect(audienceMatches(['https://cds.example.org/cds-services', expected], expected)).toBe(true);
    expect(audienceMatches('https://cds.example.org/cds-services', expected)).toBe(false);
    expect(audienceMatches('https://cds.example.net/cds-services/some-service', expected)).toBe(false);
  });

  describe('edge cases', () => {
    it('matches an aud that differs only in host case, default port or a trailing slash', () => {
      const expected = 'https://cds.example.org/cds-services/some-service';
      expect(audienceMatches('https://CDS.example.org:443/cds-services/some-service/', expected)).toBe(true);
    });

    it('does not match an aud with a query, a different path case or a dot segment', () => {
      const expected = 'https://cds.example.org/cds-services/some-service';
      expect(audienceMatches(`${expected}?x=1`, expected)).toBe(false);
      expect(audienceMatches('https://cds.example.org/CDS-SERVICES/some-service', expected)).toBe(false);
      expect(audienceMatches('https://cds.example.org/cds-services/other/../some-service', 'https://cds.example.org/cds-services/other/../some-service')).toBe(false);
    });

    it('does not match non-URL audiences', () => {
      expect(audienceMatches('some-service', 'some-service')).toBe(false);
      expect(audienceMatches(42, 'https://cds.example.org/cds-services')).toBe(false);
    });

    it('accepts an http base only when https is not required (loopback tests)', () => {
      expect(parsePublicBaseUrl('http://127.0.0.1:8080', { requireHttps: false })).toStrictEqual({ kind: 'ok', base: 'http://127.0.0.1:8080' });
      expect(parsePublicBaseUrl('ftp://cds.example.org', { requireHttps: false }).kind).toBe('invalid');
    });
  });
});
