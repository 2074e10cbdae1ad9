import { isIP } from 'node:net';
import { isLoopbackHost } from './loopback.js';
import { checkReviewLinkToken } from './review-link-token.js';

/**
 * Who may open the review pages. In the loopback demo, anyone on the machine. In production the
 * service runs no sign-in of its own: the hospital's authenticating reverse proxy signs staff in
 * and passes their identity in one configured header, which is believed only when the TCP peer is
 * one of the configured proxy addresses (never from X-Forwarded-For, which any client can write).
 * One advisory page may also be opened with the signed link token its card carried
 * (review-link-token.ts). Pure apart from the clock passed in.
 */

export type ReviewAccessConfig =
  | { readonly mode: 'demo' }
  | {
      readonly mode: 'production';
      /** Lower-case header name, e.g. `x-authenticated-user`; undefined when no proxy is set up. */
      readonly identityHeader?: string;
      /** Exact peer addresses of the proxy (normalised by `normalisePeerAddress`). */
      readonly proxyAddresses: readonly string[];
      readonly linkSecret: Uint8Array;
    };

export interface ReviewRequest {
  /** The socket's remote address, as Node reports it. */
  readonly peerAddress: string | undefined;
  /** Raw header list as Node keeps it (`req.rawHeaders`): name, value, name, value... */
  readonly rawHeaders: readonly string[];
  /** The `token` query parameter, when the request carried exactly one. */
  readonly token?: string;
  /** The advisory asked for, on advisory routes; undefined on the list and summary. */
  readonly cardUuid?: string;
}

export type ReviewDenial =
  | 'demo-host-not-loopback'
  | 'not-from-proxy'
  | 'no-identity'
  | 'identity-unreadable'
  | 'link-malformed'
  | 'link-bad-signature'
  | 'link-other-advisory'
  | 'link-expired';

export type ReviewAccessDecision =
  | { readonly kind: 'allowed'; readonly via: 'demo' | 'proxy' | 'link'; readonly reviewer: string }
  | { readonly kind: 'denied'; readonly reason: ReviewDenial };

/** `::ffff:10.0.0.5` (an IPv4 peer on a dual-stack socket) is `10.0.0.5`; IPv6 in lower case. */
export function normalisePeerAddress(address: string): string {
  const trimmed = address.trim().toLowerCase();
  const mapped = /^::ffff:(\d{1,3}(?:\.\d{1,3}){3})$/.exec(trimmed);
  return mapped?.[1] ?? trimmed;
}

/** True for a literal IPv4 or IPv6 address (no names, ranges or ports). */
export function isIpAddress(text: string): boolean {
  return isIP(text.trim()) !== 0;
}

/** Longest reviewer id accepted; proxies send a user name or e-mail address. */
export const MAX_REVIEWER_LENGTH = 256;
/** Visible ASCII and spaces (RFC 9110 §5.5 field-vchar, without obs-text). */
const REVIEWER_TEXT = /^[\x21-\x7e](?:[\x20-\x7e]*[\x21-\x7e])?$/;

/**
 * The identity header's value, when it was sent exactly once and reads as a plain id. Two copies
 * mean something upstream passed a client's own header on as well as adding its own: refused.
 */
function headerValues(rawHeaders: readonly string[], header: string): string[] {
  const values: string[] = [];
  for (let i = 0; i + 1 < rawHeaders.length; i += 2) {
    if ((rawHeaders[i] ?? '').toLowerCase() === header) {
      values.push(rawHeaders[i + 1] ?? '');
    }
  }
  return values;
}

function identityFrom(rawHeaders: readonly string[], header: string): { value?: string; count: number } {
  const values = headerValues(rawHeaders, header);
  const [only] = values;
  return values.length === 1 && only !== undefined ? { value: only.trim(), count: 1 } : { count: values.length };
}

/** The host name of a `Host` header value (`127.0.0.1:8080`, `[::1]:8080`, `localhost`). */
function hostName(value: string): string {
  const bracketed = /^\[([^\]]+)\](?::\d+)?$/.exec(value);
  if (bracketed !== null) {
    return bracketed[1] ?? '';
  }
  return value.replace(/:\d+$/, '');
}

/**
 * The demo is open, but only to pages asked for by a loopback name: a web page elsewhere that points
 * its own host name at 127.0.0.1 (DNS rebinding) sends its own name in `Host` and is refused.
 */
function demoHostIsLoopback(rawHeaders: readonly string[]): boolean {
  const hosts = headerValues(rawHeaders, 'host');
  const [host] = hosts;
  return hosts.length === 1 && host !== undefined && isLoopbackHost(hostName(host.trim()));
}

export function decideReviewAccess(config: ReviewAccessConfig, request: ReviewRequest, nowMs: number): ReviewAccessDecision {
  if (config.mode === 'demo') {
    return demoHostIsLoopback(request.rawHeaders)
      ? { kind: 'allowed', via: 'demo', reviewer: 'demo' }
      : { kind: 'denied', reason: 'demo-host-not-loopback' };
  }
  const peer = request.peerAddress === undefined ? undefined : normalisePeerAddress(request.peerAddress);
  const fromProxy = peer !== undefined && config.identityHeader !== undefined && config.proxyAddresses.includes(peer);
  let proxyDenial: ReviewDenial = 'not-from-proxy';
  if (fromProxy && config.identityHeader !== undefined) {
    const identity = identityFrom(request.rawHeaders, config.identityHeader);
    if (identity.value !== undefined && identity.value.length <= MAX_REVIEWER_LENGTH && REVIEWER_TEXT.test(identity.value)) {
      return { kind: 'allowed', via: 'proxy', reviewer: identity.value };
    }
    proxyDenial = identity.count === 0 ? 'no-identity' : 'identity-unreadable';
  }
  if (request.cardUuid !== undefined && request.token !== undefined) {
    const check = checkReviewLinkToken(config.linkSecret, request.token, request.cardUuid, nowMs);
    if (check.kind === 'valid') {
      return { kind: 'allowed', via: 'link', reviewer: 'link' };
    }
    return { kind: 'denied', reason: `link-${check.reason}` };
  }
  return { kind: 'denied', reason: proxyDenial };
}
