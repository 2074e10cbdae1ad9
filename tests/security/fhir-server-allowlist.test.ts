import { describe, expect, it } from 'vitest';
import { decideFhirServer, normaliseBaseUrl, type FhirServerPolicy } from '../../src/security/fhir-server-allowlist.js';

const listed: FhirServerPolicy = {
  kind: 'listed',
  servers: ['https://fhir.larkspur-bay.example/r4', 'https://fhir2.larkspur-bay.example:8443/'],
  requireHttps: true,
};

describe('decideFhirServer', () => {
  it.each([
    ['the listed base itself', 'https://fhir.larkspur-bay.example/r4'],
    ['the listed base with a trailing slash', 'https://fhir.larkspur-bay.example/r4/'],
    ['a path beneath the listed base', 'https://fhir.larkspur-bay.example/r4/north-campus'],
    // WHATWG URL normalisation: scheme and host case, default port
    ['the base in other case with the default port', 'HTTPS://FHIR.Larkspur-Bay.example:443/r4'],
    ['a base on a listed non-default port', 'https://fhir2.larkspur-bay.example:8443/fhir'],
  ])('allows %s', (_name, fhirServer) => {
    expect(decideFhirServer(fhirServer, listed)).toStrictEqual({ allowed: true });
  });

  it.each([
    ['another host', 'https://attacker.example/r4', 'not-listed'],
    ['a host that only starts like a listed one', 'https://fhir.larkspur-bay.example.attacker.example/r4', 'not-listed'],
    ['a sibling path sharing the prefix', 'https://fhir.larkspur-bay.example/r4-admin', 'not-listed'],
    ['a path that climbs out with ..', 'https://fhir.larkspur-bay.example/r4/../admin', 'not-listed'],
    ['an encoded climb out', 'https://fhir.larkspur-bay.example/r4/%2e%2e/admin', 'not-listed'],
    ['the right host on another port', 'https://fhir.larkspur-bay.example:444/r4', 'not-listed'],
    ['a parent of the listed base', 'https://fhir.larkspur-bay.example/', 'not-listed'],
    // CDS Hooks 2.0 §Security and Safety: HTTPS for every exchange in production
    ['http in production', 'http://fhir.larkspur-bay.example/r4', 'not-https'],
    ['credentials in the URL', 'https://user:pw@fhir.larkspur-bay.example/r4', 'invalid-url'],
    ['a query', 'https://fhir.larkspur-bay.example/r4?_format=json', 'invalid-url'],
    ['a fragment', 'https://fhir.larkspur-bay.example/r4#x', 'invalid-url'],
    ['another scheme', 'file:///etc/passwd', 'invalid-url'],
    ['not a URL', 'fhir.larkspur-bay.example/r4', 'invalid-url'],
  ])('refuses %s', (_name, fhirServer, reason) => {
    expect(decideFhirServer(fhirServer, listed)).toStrictEqual({ allowed: false, reason });
  });

  describe('demo policy: loopback only', () => {
    const demo: FhirServerPolicy = { kind: 'loopback-only' };
    it.each(['http://127.0.0.1:41234/fhir', 'http://localhost:8080/fhir', 'https://[::1]:9443/r4', 'http://127.0.0.2/fhir'])(
      'allows %s',
      (fhirServer) => {
        expect(decideFhirServer(fhirServer, demo)).toStrictEqual({ allowed: true });
      },
    );

    it.each([
      ['https://fhir.larkspur-bay.example/r4', 'not-loopback'],
      ['http://10.0.0.5/fhir', 'not-loopback'],
      ['http://localhost.attacker.example/fhir', 'not-loopback'],
      ['http://0.0.0.0:8080/fhir', 'not-loopback'],
    ])('refuses %s', (fhirServer, reason) => {
      expect(decideFhirServer(fhirServer, demo)).toStrictEqual({ allowed: false, reason });
    });
  });

  describe('edge cases', () => {
    it('allows http when https is not required and the base is listed', () => {
      const insecure: FhirServerPolicy = { kind: 'listed', servers: ['http://127.0.0.1:5555/fhir'], requireHttps: false };
      expect(decideFhirServer('http://127.0.0.1:5555/fhir/', insecure)).toStrictEqual({ allowed: true });
      expect(decideFhirServer('http://127.0.0.1:5556/fhir', insecure)).toStrictEqual({ allowed: false, reason: 'not-listed' });
    });

    it('allows nothing with an empty list', () => {
      const none: FhirServerPolicy = { kind: 'listed', servers: [], requireHttps: true };
      expect(decideFhirServer('https://fhir.larkspur-bay.example/r4', none)).toStrictEqual({ allowed: false, reason: 'not-listed' });
    });

    it('ignores a malformed list entry rather than matching everything', () => {
      const broken: FhirServerPolicy = { kind: 'listed', servers: ['not a url', ''], requireHttps: true };
      expect(decideFhirServer('https://fhir.larkspur-bay.example/r4', broken)).toStrictEqual({ allowed: false, reason: 'not-listed' });
    });

    it('normalises a base to origin and path without trailing slashes', () => {
      expect(normaliseBaseUrl('HTTPS://Fhir.Larkspur-Bay.example:443/r4//')).toStrictEqual({
        origin: 'https://fhir.larkspur-bay.example',
        path: '/r4',
        protocol: 'https:',
        hostname: 'fhir.larkspur-bay.example',
      });
    });
  });
});
