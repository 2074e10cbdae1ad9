import { isLoopbackHost } from './loopback.js';

/**
 * Which `fhirServer` URLs the service may call, with the caller's `fhirAuthorization` token, for one
 * authenticated CDS client. A hook request names the FHIR server itself, so without this check any
 * caller could make the service send requests (and a bearer token) to any host: server-side request
 * forgery. Pure: the decision depends only on the URL and the policy.
 */
export type FhirServerPolicy =
  /** Production: the client's `fhirServers` from the trust file, each a base URL (origin + path). */
  | { readonly kind: 'listed'; readonly servers: readonly string[]; readonly requireHttps: boolean }
  /** Demo: any port on 127.0.0.0/8, ::1 or localhost, http or https; nothing else. */
  | { readonly kind: 'loopback-only' };

export type FhirServerRefusal = 'invalid-url' | 'not-https' | 'not-listed' | 'not-loopback';

export type FhirServerDecision =
  | { readonly allowed: true }
  | { readonly allowed: false; readonly reason: FhirServerRefusal };

/** The parts compared: origin (scheme, host, port) and path without trailing slashes. */
export interface NormalisedBase {
  readonly origin: string;
  readonly path: string;
  readonly protocol: string;
  readonly hostname: string;
}

/**
 * WHATWG URL normalisation (scheme and host lower-cased, default port dropped, `.` and `..`
 * resolved), then the trailing slashes removed. Undefined for a URL that is not a plain http(s)
 * base: another scheme, a query, a fragment or credentials.
 */
export function normaliseBaseUrl(text: string): NormalisedBase | undefined {
  let url: URL;
  try {
    url = new URL(text);
  } catch {
    return undefined;
  }
  if (url.protocol !== 'https:' && url.protocol !== 'http:') {
    return undefined;
  }
  if (url.search !== '' || url.hash !== '' || url.username !== '' || url.password !== '') {
    return undefined;
  }
  return {
    origin: url.origin,
    path: url.pathname.replace(/\/+$/, ''),
    protocol: url.protocol,
    hostname: url.hostname,
  };
}

/** True when `candidate` is `base` or lies beneath it on a path-segment boundary. */
function isUnder(candidate: NormalisedBase, base: NormalisedBase): boolean {
  if (candidate.origin !== base.origin) {
    return false;
  }
  return candidate.path === base.path || candidate.path.startsWith(`${base.path}/`);
}

export function decideFhirServer(fhirServer: string, policy: FhirServerPolicy): FhirServerDecision {
  const candidate = normaliseBaseUrl(fhirServer);
  if (candidate === undefined) {
    return { allowed: false, reason: 'invalid-url' };
  }
  if (policy.kind === 'loopback-only') {
    return isLoopbackHost(candidate.hostname)
      ? { allowed: true }
      : { allowed: false, reason: 'not-loopback' };
  }
  if (policy.requireHttps && candidate.protocol !== 'https:') {
    return { allowed: false, reason: 'not-https' };
  }
  const listed = policy.servers
    .map(normaliseBaseUrl)
    .some((base) => base !== undefined && isUnder(candidate, base));
  return listed ? { allowed: true } : { allowed: false, reason: 'not-listed' };
}
