import { findJsonLimitBreach } from './json-limits.js';
import { readCappedBody } from '../net/read-capped-body.js';

/**
 * The FHIR reads the service makes itself when prefetch did not supply what it needs (CDS Hooks 2.0
 * §FHIR Resource Access). Only ever called with both `fhirServer` and `fhirAuthorization` in hand.
 * The token goes in the Authorization header and nowhere else: failures are reported by kind, never
 * with a URL, a header or a body.
 */

export type FetchFailure =
  | 'timeout'
  | 'network'
  | 'interrupted'
  | 'redirect'
  | 'http-status'
  | 'too-large'
  | 'invalid-json'
  | 'not-fhir'
  | 'too-complex'
  | 'outside-server';

export type FhirFetchOutcome =
  | { readonly kind: 'ok'; readonly resource: Readonly<Record<string, unknown>> }
  /** 404 or 410 on a read: the server looked and found nothing, as a `null` prefetch says. */
  | { readonly kind: 'not-found' }
  | { readonly kind: 'failed'; readonly failure: FetchFailure; readonly status?: number };

export interface FhirCallOptions {
  readonly fetch: typeof fetch;
  readonly accessToken: string;
  /** Aborts the call: the per-call timeout and the hook call's overall budget, combined. */
  readonly signal: AbortSignal;
  readonly maxResponseBytes: number;
}

/** `fhirServer` with one trailing slash, so relative URLs resolve beneath it, not beside it. */
function baseWithSlash(fhirServer: string): URL {
  return new URL(fhirServer.endsWith('/') ? fhirServer : `${fhirServer}/`);
}

/**
 * True when `url` lies on the FHIR server the client named: same origin and under its base path.
 * Anything else (another host, `..` out of the base) would send the token where it was not granted.
 */
export function isUnderServer(url: URL, fhirServer: string): boolean {
  const base = baseWithSlash(fhirServer);
  return url.origin === base.origin && url.pathname.startsWith(base.pathname);
}

/** Resolves a relative FHIR URL (an expanded prefetch template) against `fhirServer`. */
export function resolveUnderServer(relative: string, fhirServer: string): URL | undefined {
  let url: URL;
  try {
    url = new URL(relative.replace(/^\/+/, ''), baseWithSlash(fhirServer));
  } catch {
    return undefined;
  }
  return isUnderServer(url, fhirServer) ? url : undefined;
}

function isAbort(error: unknown): boolean {
  const name = error instanceof Error ? error.name : '';
  return name === 'TimeoutError' || name === 'AbortError';
}

/** Before the response started: unreachable; after: the answer broke off (reset, short body). */
function failureOf(error: unknown, answering: boolean): FetchFailure {
  if (isAbort(error)) {
    return 'timeout';
  }
  return answering ? 'interrupted' : 'network';
}

/**
 * GETs one FHIR URL with `Accept: application/fhir+json` and the bearer token. Redirects are not
 * followed (`redirect: 'manual'`): a 3xx could point at another host, so it counts as a failure.
 */
export async function getFhirJson(url: URL, options: FhirCallOptions): Promise<FhirFetchOutcome> {
  let response: Response;
  try {
    response = await options.fetch(url, {
      method: 'GET',
      headers: { Accept: 'application/fhir+json', Authorization: `Bearer ${options.accessToken}` },
      redirect: 'manual',
      signal: options.signal,
    });
  } catch (error) {
    return { kind: 'failed', failure: failureOf(error, false) };
  }
  try {
    if (response.type === 'opaqueredirect' || (response.status >= 300 && response.status < 400)) {
      await response.body?.cancel();
      return { kind: 'failed', failure: 'redirect', status: response.status };
    }
    if (response.status === 404 || response.status === 410) {
      await response.body?.cancel();
      return { kind: 'not-found' };
    }
    if (!response.ok) {
      await response.body?.cancel();
      return { kind: 'failed', failure: 'http-status', status: response.status };
    }
    const text = await readCappedBody(response, options.maxResponseBytes);
    if (text === undefined) {
      return { kind: 'failed', failure: 'too-large' };
    }
    let json: unknown;
    try {
      json = JSON.parse(text);
    } catch {
      return { kind: 'failed', failure: 'invalid-json' };
    }
    if (json === null || typeof json !== 'object' || Array.isArray(json)) {
      return { kind: 'failed', failure: 'not-fhir' };
    }
    // The same structural limits as a request body: a server's answer is no more trusted than a caller's.
    if (findJsonLimitBreach(json) !== undefined) {
      return { kind: 'failed', failure: 'too-complex' };
    }
    const resource = json as Readonly<Record<string, unknown>>;
    if (typeof resource['resourceType'] !== 'string') {
      return { kind: 'failed', failure: 'not-fhir' };
    }
    return { kind: 'ok', resource };
  } catch (error) {
    return { kind: 'failed', failure: failureOf(error, true) };
  }
}
