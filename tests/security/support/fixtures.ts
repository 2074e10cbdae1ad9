import { randomUUID } from 'node:crypto';
import { parseTrustObject, type TrustConfig } from '../../../src/security/trust-config.js';
import { makeKey } from './keys.js';

/**
 * Invented parties for the security tests: the EHR of the fictional Larkspur Bay General Hospital
 * (the trusted CDS client), a second trusted client, and the service's public URL. Keys are made
 * here, per test run.
 */
export const PUBLIC_BASE = 'https://cds.larkspur-bay.example';
export const SIGN_PATH = '/cds-services/oxygen-order-sign';
export const SIGN_AUD = `${PUBLIC_BASE}${SIGN_PATH}`;
export const DISCOVERY_AUD = `${PUBLIC_BASE}/cds-services`;

export const EHR_ISS = 'https://ehr.larkspur-bay.example';
export const THEATRES_ISS = 'https://theatres.larkspur-bay.example';
export const EHR_JKU = 'https://ehr.larkspur-bay.example/.well-known/jwks.json';
export const EHR_FHIR = 'https://fhir.larkspur-bay.example/r4';

/** 2025-03-14T09:00:00Z, the clock of the Larkspur Bay HTTP tests. */
export const NOW = new Date('2025-03-14T09:00:00Z');
export const NOW_S = NOW.getTime() / 1000;

export const EHR_ES384 = makeKey('ES384', 'lbgh-ehr-es384-2025');
export const EHR_RS384 = makeKey('RS384', 'lbgh-ehr-rs384-2025');
export const THEATRES_ES384 = makeKey('ES384', 'lbgh-theatres-2025');

/** Claims as a CDS client sends them: exp = iat + 300, as the reference sandbox does. */
export function claims(aud: unknown, overrides: Record<string, unknown> = {}): Record<string, unknown> {
  return { iss: EHR_ISS, aud, iat: NOW_S - 5, exp: NOW_S + 295, jti: randomUUID(), ...overrides };
}

export function ehrClient(overrides: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    iss: EHR_ISS,
    jwks: { keys: [EHR_ES384.publicJwk, EHR_RS384.publicJwk] },
    jkuAllowlist: [EHR_JKU],
    fhirServers: [EHR_FHIR],
    ...overrides,
  };
}

export function theatresClient(overrides: Record<string, unknown> = {}): Record<string, unknown> {
  return { iss: THEATRES_ISS, jwks: { keys: [THEATRES_ES384.publicJwk] }, fhirServers: [], ...overrides };
}

/** A trust configuration from raw trust-file objects; throws (a test bug) when they are invalid. */
export function trustOf(clients: readonly Record<string, unknown>[], requireHttps = true): TrustConfig {
  const parsed = parseTrustObject({ clients }, { requireHttps });
  if (parsed.kind !== 'ok') {
    throw new Error(parsed.problems.map((p) => `${p.path}: ${p.message}`).join('\n'));
  }
  return parsed.trust;
}

/** A fetch that answers listed URLs with JSON and records every URL asked for; no network. */
export function fakeFetch(answers: Readonly<Record<string, unknown>>): { fetch: typeof fetch; asked: string[] } {
  const asked: string[] = [];
  const fetchStub = (input: string | URL | Request): Promise<Response> => {
    const url = input instanceof Request ? input.url : String(input);
    asked.push(url);
    const body = answers[url];
    return Promise.resolve(
      body === undefined ? new Response('', { status: 404 }) : new Response(JSON.stringify(body), { status: 200 }),
    );
  };
  return { fetch: fetchStub, asked };
}
