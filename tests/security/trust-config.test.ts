import { mkdtemp, rm, writeFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { formatTrustProblems, loadTrustFile, parseTrustObject, parseTrustText } from '../../src/security/trust-config.js';
import { SPEC_JWKS, SPEC_PRIVATE_JWK } from '../fixtures/security/spec-jwt-example.js';
import { makeKey } from './support/keys.js';

const ES = makeKey('ES384', 'lbgh-ehr-2025-03');
const RS = makeKey('RS384', 'lbgh-ehr-rsa-1');

/** The shape issue 3 fixes, for the invented Larkspur Bay EHR. */
const YAML_TRUST = `
clients:
  - iss: https://ehr.larkspur-bay.example
    jwks: { keys: [${JSON.stringify(ES.publicJwk)}, ${JSON.stringify(RS.publicJwk)}] }
    jkuAllowlist: [ https://ehr.larkspur-bay.example/.well-known/jwks.json ]
    algorithms: [ ES384, RS384 ]
    tenants: [ north-campus ]
    fhirServers: [ https://fhir.larkspur-bay.example/r4 ]
  - iss: https://theatres.larkspur-bay.example/
    jwksUrl: https://theatres.larkspur-bay.example/keys
    fhirServers: []
`;

let dir: string;

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'oxygen-order-checker-trust-'));
});

afterAll(async () => {
  await rm(dir, { recursive: true, force: true });
});

describe('trust configuration', () => {
  it('reads a YAML trust file into clients keyed by iss', async () => {
    const path = join(dir, 'trust.yaml');
    await writeFile(path, YAML_TRUST);
    const loaded = await loadTrustFile(path, { requireHttps: true });
    if (loaded.kind !== 'ok') throw new Error(formatTrustProblems(path, loaded.problems));
    const ehr = loaded.trust.clients.get('https://ehr.larkspur-bay.example');
    expect(ehr?.keySource.kind === 'static' ? [...ehr.keySource.keys.keys()] : ehr?.keySource).toStrictEqual([
      'lbgh-ehr-2025-03',
      'lbgh-ehr-rsa-1',
    ]);
    expect({ ...ehr, keySource: undefined }).toStrictEqual({
      iss: 'https://ehr.larkspur-bay.example',
      keySource: undefined,
      jkuAllowlist: ['https://ehr.larkspur-bay.example/.well-known/jwks.json'],
      algorithms: ['ES384', 'RS384'],
      tenants: ['north-campus'],
      fhirServers: ['https://fhir.larkspur-bay.example/r4'],
    });
    // CDS Hooks 2.0 §JWT signing algorithm: ES384 and RS384 RECOMMENDED, so the default
    expect(loaded.trust.clients.get('https://theatres.larkspur-bay.example/')).toStrictEqual({
      iss: 'https://theatres.larkspur-bay.example/',
      keySource: { kind: 'remote', url: 'https://theatres.larkspur-bay.example/keys' },
      jkuAllowlist: [],
      algorithms: ['ES384', 'RS384'],
      tenants: undefined,
      fhirServers: [],
    });
  });

  it('reads the same from JSON', () => {
    const json = JSON.stringify({
      clients: [{ iss: 'https://fhir-ehr.example.com/', jwks: SPEC_JWKS, fhirServers: ['https://fhir-ehr.example.com/r4'] }],
    });
    const parsed = parseTrustText(json, { requireHttps: true });
    expect(parsed.kind === 'ok' ? [...parsed.trust.clients.keys()] : parsed).toStrictEqual(['https://fhir-ehr.example.com/']);
  });

  it('lists every problem in an invalid file, each with its path', () => {
    const parsed = parseTrustObject(
      {
        clients: [
          {
            iss: 'https://ehr.larkspur-bay.example',
            jwks: { keys: [SPEC_PRIVATE_JWK, { kty: 'oct', k: 'c2VjcmV0', kid: 'hmac' }] },
            jwksUrl: 'http://ehr.larkspur-bay.example/jwks',
            jkuAllowlist: ['not a url'],
            algorithms: ['none', 'HS256', 'ES384'],
            fhirServers: ['http://fhir.larkspur-bay.example/r4', 'https://fhir.larkspur-bay.example/r4?_format=json'],
            jwksURL: 'https://typo.example',
          },
          { iss: 'https://ehr.larkspur-bay.example', fhirServers: [] },
          { iss: '', jwks: { keys: [ES.publicJwk, ES.publicJwk] }, algorithms: ['RS384'], tenants: [] },
        ],
      },
      { requireHttps: true },
    );
    expect(parsed).toStrictEqual({
      kind: 'invalid',
      problems: [
        // RFC 7518 §6.2.2.1: d is private key material
        { path: 'clients.0.jwks.keys.0', message: "holds private key material ('d'); give public keys only" },
        { path: 'clients.0.jwks.keys.1', message: "is a symmetric key (kty 'oct'), which is never accepted" },
        // CDS Hooks 2.0 §Security and Safety: HTTPS
        { path: 'clients.0.jwksUrl', message: 'must use https (CDS Hooks 2.0 §Security and Safety)' },
        { path: 'clients.0.jkuAllowlist.0', message: 'must be an absolute URL' },
        // CDS Hooks 2.0 §JWT signing algorithm: none and symmetric algorithms SHALL NOT be used
        { path: 'clients.0.algorithms.0', message: "'none' (unsigned tokens) is never accepted (CDS Hooks 2.0 §JWT signing algorithm)" },
        { path: 'clients.0.algorithms.1', message: "'HS256' is symmetric and is never accepted (CDS Hooks 2.0 §JWT signing algorithm)" },
        { path: 'clients.0.fhirServers.0', message: 'must use https (CDS Hooks 2.0 §Security and Safety)' },
        { path: 'clients.0.fhirServers.1', message: 'must be a FHIR base URL, without a query' },
        { path: 'clients.0', message: 'Unrecognized key: "jwksURL"' },
        { path: 'clients.0', message: 'give exactly one of jwks or jwksUrl' },
        { path: 'clients.1', message: 'give exactly one of jwks or jwksUrl' },
        { path: 'clients.2.iss', message: 'must be the issuer exactly as the client puts it in iss' },
        { path: 'clients.2.tenants', message: 'must name at least one tenant, or be left out' },
        { path: 'clients.2.fhirServers', message: 'must list the FHIR base URLs the service may call for this client ([] for none)' },
        { path: 'clients.2.jwks.keys.0', message: "suits none of this client's algorithms (RS384)" },
        { path: 'clients.2.jwks.keys.1', message: "kid 'lbgh-ehr-2025-03' is used by an earlier key" },
        { path: 'clients.2.jwks.keys.1', message: "suits none of this client's algorithms (RS384)" },
        { path: 'clients.1.iss', message: "'https://ehr.larkspur-bay.example' is listed by an earlier client" },
      ],
    });
  });

  describe('edge cases', () => {
    it('refuses an empty client list and unknown top-level keys', () => {
      expect(parseTrustObject({ clients: [], version: 2 }, { requireHttps: true })).toStrictEqual({
        kind: 'invalid',
        problems: [
          { path: 'clients', message: 'must list at least one trusted CDS client' },
          { path: '(root)', message: 'Unrecognized key: "version"' },
        ],
      });
    });

    it('names a file that cannot be read', async () => {
      const missing = join(dir, 'absent.yaml');
      const loaded = await loadTrustFile(missing, { requireHttps: true });
      expect(loaded).toStrictEqual({ kind: 'invalid', problems: [{ path: '(file)', message: 'cannot be read (ENOENT)' }] });
      expect(formatTrustProblems(missing, loaded.kind === 'invalid' ? loaded.problems : [])).toBe(
        `${missing}: (file): cannot be read (ENOENT)`,
      );
    });

    it('refuses YAML that does not parse, and duplicate keys', () => {
      expect(parseTrustText('clients: [', { requireHttps: true }).kind).toBe('invalid');
      const duplicate = parseTrustText('clients: []\nclients: []\n', { requireHttps: true });
      expect(duplicate.kind === 'invalid' ? duplicate.problems.map((p) => p.path) : duplicate).toStrictEqual(['(file)']);
    });

    it('accepts http URLs only when told https is not required (loopback tests)', () => {
      const client = { iss: 'https://ehr.larkspur-bay.example', jwksUrl: 'http://127.0.0.1:4000/jwks.json', fhirServers: ['http://127.0.0.1:4001/fhir'] };
      expect(parseTrustObject({ clients: [client] }, { requireHttps: false }).kind).toBe('ok');
      expect(parseTrustObject({ clients: [client] }, { requireHttps: true }).kind).toBe('invalid');
    });

    it('freezes what it builds', () => {
      const parsed = parseTrustObject({ clients: [{ iss: 'https://ehr.larkspur-bay.example', jwks: SPEC_JWKS, fhirServers: [] }] }, { requireHttps: true });
      const client = parsed.kind === 'ok' ? parsed.trust.clients.get('https://ehr.larkspur-bay.example') : undefined;
      expect([Object.isFrozen(client), Object.isFrozen(client?.algorithms), Object.isFrozen(client?.fhirServers)]).toStrictEqual([true, true, true]);
    });
  });
});
