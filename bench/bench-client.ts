import { generateKeyPairSync, randomUUID, type KeyObject } from 'node:crypto';
import { writeFileSync } from 'node:fs';
import jwt from 'jsonwebtoken';

/**
 * The bench's own CDS client for production mode: an ES384 key pair made at bench start (never
 * stored beyond the run's scratch folder), the trust file that lists it, and the signed tokens its
 * calls carry (CDS Hooks 2.0 §Trusting CDS Clients). The service's replay cache refuses a `jti` it
 * has seen, so every call gets its own token; they are signed ahead of a load, never during it, so
 * signing does not take CPU from the processes being measured.
 */

/** The issuer the trust file lists; an invented client of the invented Larkspur Bay EHR. */
export const BENCH_ISSUER = 'https://ehr.larkspur-bay.example/bench-client';
/** The public URL the service is told it has; the audience of every token (docs/security.md). */
export const BENCH_PUBLIC_URL = 'https://cds.larkspur-bay.example';
export const BENCH_KID = 'larkspur-bench-es384';
/** Long enough for a whole run's pool to stay valid; within the service's default 1 h maximum. */
const TOKEN_LIFETIME_S = 1800;

export interface BenchClient {
  readonly privateKey: KeyObject;
  readonly publicKey: KeyObject;
  /** The public key as a JWK with kid, alg and use, as the trust file holds it. */
  readonly publicJwk: Readonly<Record<string, unknown>>;
}

export function createBenchClient(): BenchClient {
  const { privateKey, publicKey } = generateKeyPairSync('ec', { namedCurve: 'P-384' });
  const publicJwk = { ...publicKey.export({ format: 'jwk' }), kid: BENCH_KID, alg: 'ES384', use: 'sig' };
  return { privateKey, publicKey, publicJwk };
}

/** The trust file (OXYGEN_CHECKER_TRUST) naming only the bench client; JSON is valid YAML. */
export function trustFileText(client: BenchClient): string {
  return `${JSON.stringify(
    { clients: [{ iss: BENCH_ISSUER, jwks: { keys: [client.publicJwk] }, algorithms: ['ES384'], fhirServers: [] }] },
    null,
    2,
  )}\n`;
}

export function writeTrustFile(client: BenchClient, path: string): void {
  writeFileSync(path, trustFileText(client));
}

/** The audience of a call to `serviceId`: the endpoint's public URL (src/security/public-url.ts). */
export function audienceOf(serviceId: string): string {
  return `${BENCH_PUBLIC_URL}/cds-services/${serviceId}`;
}

/** One signed token for one call to `serviceId`, with its own jti. */
export function signToken(client: BenchClient, serviceId: string, nowS: number = Math.floor(Date.now() / 1000)): string {
  return jwt.sign(
    { iss: BENCH_ISSUER, sub: BENCH_ISSUER, aud: audienceOf(serviceId), iat: nowS, exp: nowS + TOKEN_LIFETIME_S, jti: randomUUID() },
    client.privateKey,
    { algorithm: 'ES384', keyid: BENCH_KID, header: { alg: 'ES384', typ: 'JWT', kid: BENCH_KID } },
  );
}

/** One call as it goes on the wire: path, body and its own token. */
export interface SignedCall {
  readonly path: string;
  readonly body: string;
  readonly authorization: string;
  /** Which fixed answer the baseline gives (`x-bench-case`); the service ignores the header. */
  readonly caseName: string;
}

export interface CallSource {
  readonly serviceId: string;
  readonly caseName: string;
  /** A body for one call; a maker gives each call a fresh hookInstance so its audit write inserts rows. */
  readonly makeBody: () => string;
}

/**
 * `count` calls taking the sources in turn (the examples mix), each with a fresh token. Made before
 * the load they are used in.
 */
export function signCalls(client: BenchClient, sources: readonly CallSource[], count: number): SignedCall[] {
  if (sources.length === 0) {
    throw new Error('signCalls needs at least one source');
  }
  const nowS = Math.floor(Date.now() / 1000);
  return Array.from({ length: count }, (_, index) => {
    const source = sources[index % sources.length] as CallSource;
    return {
      path: `/cds-services/${source.serviceId}`,
      body: source.makeBody(),
      authorization: `Bearer ${signToken(client, source.serviceId, nowS)}`,
      caseName: source.caseName,
    };
  });
}
