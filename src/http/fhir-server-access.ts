import {
  decideFhirServer,
  type FhirServerPolicy,
  type FhirServerRefusal,
} from '../security/fhir-server-allowlist.js';
import type { UnavailablePrefetch } from './errors.js';
import type { GatherRequest } from './gather-data.js';

/**
 * Applies the caller's FHIR server policy to a hook request before anything is gathered. A
 * `fhirServer` the client may not use is never called: the request goes on as if it had given no FHIR
 * access at all (prefetch only), so the `fhirAuthorization` token is not sent anywhere.
 */
export interface LimitedAccess<R extends GatherRequest> {
  readonly request: R;
  readonly refused: FhirServerRefusal | undefined;
}

export function limitFhirAccess<R extends GatherRequest>(request: R, policy: FhirServerPolicy): LimitedAccess<R> {
  if (request.fhirServer === undefined) {
    return { request, refused: undefined };
  }
  const decision = decideFhirServer(request.fhirServer, policy);
  if (decision.allowed) {
    return { request, refused: undefined };
  }
  return { request: { ...request, fhirServer: undefined, fhirAuthorization: undefined }, refused: decision.reason };
}

const WHY_REFUSED: Readonly<Record<FhirServerRefusal, string>> = {
  'not-listed': 'it is not on the fhirServers list of this client',
  'not-https': 'it does not use https',
  'not-loopback': 'demo mode calls loopback FHIR servers only',
  'invalid-url': 'it is not a plain http(s) base URL',
};

/** The gatherer's words for "no FHIR access given", which here would hide the real reason. */
const NO_ACCESS = /, and the request gave no FHIR server access.*$/;

/** Rewrites each 412 reason so the caller learns the fhirServer was refused, not merely absent. */
export function explainRefusal(
  unavailable: readonly UnavailablePrefetch[],
  refused: FhirServerRefusal,
): UnavailablePrefetch[] {
  const because =
    `the fhirServer in the request is not allowed for this client (${WHY_REFUSED[refused]}), ` +
    'so it was not called';
  return unavailable.map((item) => ({
    key: item.key,
    reason: NO_ACCESS.test(item.reason)
      ? item.reason.replace(NO_ACCESS, `, and ${because}`)
      : `${item.reason}; ${because}`,
  }));
}
