import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { getFhirJson, isUnderServer, resolveUnderServer } from '../../src/http/fhir-client.js';
import { startFhirServer, type FhirTestServer } from './fhir-test-server.js';

// Invented Larkspur Bay General Hospital data and token.
const TOKEN = 'lbgh-demo-token-0417';
const patient = { resourceType: 'Patient', id: 'lb-pt-0417', birthDate: '1951-09-30' };

let fhir: FhirTestServer;
let elsewhere: FhirTestServer;

beforeAll(async () => {
  elsewhere = await startFhirServer(() => ({ status: 200, body: patient }));
  fhir = await startFhirServer((request) => {
    const path = request.url.replace(/^\/fhir\//, '');
    switch (path) {
      case 'Patient/lb-pt-0417':
        return { status: 200, body: patient };
      case 'Patient/gone':
        return { status: 410, body: { resourceType: 'OperationOutcome', issue: [] } };
      case 'Patient/broken':
        return { status: 500, body: { resourceType: 'OperationOutcome', issue: [] } };
      case 'Patient/moved':
        return { status: 302, headers: { Location: `${elsewhere.baseUrl}/Patient/lb-pt-0417` } };
      case 'Patient/huge':
        return { status: 200, body: { ...patient, note: 'x'.repeat(5000) } };
      case 'Patient/not-json':
        return { status: 200, rawBody: '<html>login</html>' };
      case 'Patient/not-fhir':
        return { status: 200, body: { hello: 'world' } };
      case 'Patient/slow':
        return { status: 200, body: patient, delayMs: 2000 };
      default:
        return { status: 404, body: { resourceType: 'OperationOutcome', issue: [] } };
    }
  });
});

afterAll(async () => {
  await fhir.close();
  await elsewhere.close();
});

function options(signal: AbortSignal = AbortSignal.timeout(5000), maxResponseBytes = 4096) {
  return { fetch: globalThis.fetch, accessToken: TOKEN, signal, maxResponseBytes };
}

function at(path: string): URL {
  return new URL(`${fhir.baseUrl}/${path}`);
}

describe('getFhirJson', () => {
  it('reads a resource, sending the bearer token and asking for FHIR JSON', async () => {
    const before = fhir.requests.length;
    const outcome = await getFhirJson(at('Patient/lb-pt-0417'), options());
    expect(outcome).toStrictEqual({ kind: 'ok', resource: patient });
    const received = fhir.requests[before];
    // CDS Hooks 2.0 §FHIR Resource Access: the access token as an OAuth 2.0 bearer token (RFC 6750 §2.1)
    expect(received?.headers.authorization).toBe(`Bearer ${TOKEN}`);
    // FHIR R4 §http: application/fhir+json is the JSON MIME type
    expect(received?.headers.accept).toBe('application/fhir+json');
    expect(received?.method).toBe('GET');
  });

  it('reads 404 and 410 as found-nothing', async () => {
    expect(await getFhirJson(at('Patient/unknown'), options())).toStrictEqual({ kind: 'not-found' });
    expect(await getFhirJson(at('Patient/gone'), options())).toStrictEqual({ kind: 'not-found' });
  });

  it('reports an error status by its number', async () => {
    expect(await getFhirJson(at('Patient/broken'), options())).toStrictEqual({
      kind: 'failed',
      failure: 'http-status',
      status: 500,
    });
  });

  it('does not follow a redirect, so the token never reaches the other host', async () => {
    const outcome = await getFhirJson(at('Patient/moved'), options());
    expect(outcome).toStrictEqual({ kind: 'failed', failure: 'redirect', status: 302 });
    expect(elsewhere.requests).toStrictEqual([]);
  });

  it('stops reading a body larger than the cap', async () => {
    expect(await getFhirJson(at('Patient/huge'), options(undefined, 1024))).toStrictEqual({
      kind: 'failed',
      failure: 'too-large',
    });
  });

  it('refuses a body that is not JSON, or JSON that is not a FHIR resource', async () => {
    expect(await getFhirJson(at('Patient/not-json'), options())).toStrictEqual({
      kind: 'failed',
      failure: 'invalid-json',
    });
    expect(await getFhirJson(at('Patient/not-fhir'), options())).toStrictEqual({
      kind: 'failed',
      failure: 'not-fhir',
    });
  });

  it('gives up when the signal times out', async () => {
    expect(await getFhirJson(at('Patient/slow'), options(AbortSignal.timeout(100)))).toStrictEqual({
      kind: 'failed',
      failure: 'timeout',
    });
  });

  describe('edge cases', () => {
    it('reports a refused connection as a network failure', async () => {
      const closed = await startFhirServer(() => ({ status: 200 }));
      const url = new URL(`${closed.baseUrl}/Patient/lb-pt-0417`);
      await closed.close();
      expect(await getFhirJson(url, options())).toStrictEqual({ kind: 'failed', failure: 'network' });
    });
  });
});

describe('resolveUnderServer', () => {
  const base = 'https://fhir.larkspur-bay.example/r4';

  it('resolves a relative query beneath the base path, not beside it', () => {
    expect(resolveUnderServer('Observation?patient=lb-pt-0417&_count=10', base)?.href).toBe(
      'https://fhir.larkspur-bay.example/r4/Observation?patient=lb-pt-0417&_count=10',
    );
    expect(resolveUnderServer('Patient/lb-pt-0417', `${base}/`)?.href).toBe(
      'https://fhir.larkspur-bay.example/r4/Patient/lb-pt-0417',
    );
  });

  describe('edge cases', () => {
    it.each([
      ['a path that climbs out of the base', '../admin/Patient/1'],
      ['an absolute URL to another host', 'https://elsewhere.example/r4/Patient/1'],
    ])('refuses %s', (_what, relative) => {
      expect(resolveUnderServer(relative, base)).toBeUndefined();
    });

    it('keeps a protocol-relative URL on the FHIR server', () => {
      expect(resolveUnderServer('//elsewhere.example/r4/Patient/1', base)?.origin).toBe(
        'https://fhir.larkspur-bay.example',
      );
    });

    it('treats a leading slash as relative to the base', () => {
      expect(resolveUnderServer('/Patient/lb-pt-0417', base)?.href).toBe(
        'https://fhir.larkspur-bay.example/r4/Patient/lb-pt-0417',
      );
    });

    it('accepts a next link on the same server and refuses one on another origin', () => {
      expect(isUnderServer(new URL(`${base}/Observation?page=2`), base)).toBe(true);
      expect(isUnderServer(new URL('https://fhir.larkspur-bay.example:8443/r4/Observation'), base)).toBe(false);
      expect(isUnderServer(new URL('http://fhir.larkspur-bay.example/r4/Observation'), base)).toBe(false);
      expect(isUnderServer(new URL('https://fhir.larkspur-bay.example/r4x/Observation'), base)).toBe(false);
    });
  });
});
