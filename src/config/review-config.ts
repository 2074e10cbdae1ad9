import { isAbsolute, join, resolve } from 'node:path';
import type { EnvProblem, Mode } from './env-config.js';
import { isIpAddress, normalisePeerAddress } from '../security/review-access.js';

/**
 * Settings of the review pages' access (docs/security.md, "Review pages"), read from the environment
 * with the same rules as env-config.ts: every problem listed, nothing read later.
 */

export const REVIEW_DEFAULTS = {
  // A card's link opens its advisory for one day: long enough to follow it from the EHR during the
  // shift and the handover after, short enough that a link copied into a note or a browser history
  // stops working the next day. The proxy sign-in is the way in after that.
  OXYGEN_CHECKER_REVIEW_LINK_TTL_S: 86_400, // seconds
  REVIEW_LINK_SECRET_NAME: 'review-link.secret',
} as const;

/** The link lifetimes accepted, in seconds: one minute to seven days. */
export const REVIEW_LINK_TTL_RANGE_S = { min: 60, max: 604_800 } as const;

/** Every variable this file reads (the data directory comes from env-config.ts); the known-name check uses it. */
export const REVIEW_VARIABLES = [
  'OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER',
  'OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES',
  'OXYGEN_CHECKER_REVIEW_LINK_TTL_S',
  'OXYGEN_CHECKER_REVIEW_LINK_SECRET_FILE',
] as const;
type ReviewVariable = (typeof REVIEW_VARIABLES)[number];

/** Headers that mean something else on the way in; never an identity. */
const RESERVED_HEADERS = new Set(['authorization', 'cookie', 'host', 'x-forwarded-for', 'forwarded', 'x-real-ip', 'content-type']);
/** RFC 9110 §5.1 field-name: a token. */
const HEADER_NAME = /^[!#$%&'*+.^_`|~0-9A-Za-z-]+$/;

export interface ReviewConfig {
  /** Lower-case header the proxy asserts the reviewer in; undefined when there is no proxy. */
  readonly identityHeader?: string;
  readonly proxyAddresses: readonly string[];
  readonly linkTtlS: number;
  readonly linkSecretPath: string;
  /** True when the secret is the data directory's own file, created on first start. */
  readonly createLinkSecret: boolean;
}

export type ReviewConfigParse =
  | { readonly kind: 'ok'; readonly config: ReviewConfig }
  | { readonly kind: 'invalid'; readonly problems: readonly EnvProblem[] };

function text(env: Readonly<Record<string, string | undefined>>, name: ReviewVariable): string {
  return (env[name] ?? '').trim();
}

/** `dataDir` is the store's data directory as env-config.ts read it (absolute): the one place it is read. */
export function parseReviewConfig(
  env: Readonly<Record<string, string | undefined>>,
  cwd: string,
  mode: Mode,
  dataDir: string,
): ReviewConfigParse {
  const problems: EnvProblem[] = [];
  const header = text(env, 'OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER');
  const addressText = text(env, 'OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES');
  const addresses = addressText === '' ? [] : addressText.split(',').map((a) => a.trim()).filter((a) => a !== '');
  if (mode === 'demo') {
    for (const [variable, value] of [['OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER', header], ['OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES', addressText]] as const) {
      if (value !== '') {
        problems.push({ variable, message: 'is set, but OXYGEN_CHECKER_MODE is not production: the demo review pages are open on loopback; set OXYGEN_CHECKER_MODE=production' });
      }
    }
  }
  if (header !== '' && (!HEADER_NAME.test(header) || RESERVED_HEADERS.has(header.toLowerCase()))) {
    problems.push({ variable: 'OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER', message: 'must be a header name of its own, e.g. X-Authenticated-User (not Authorization, Cookie, Host or a forwarding header)' });
  }
  for (const address of addresses) {
    if (!isIpAddress(address)) {
      problems.push({ variable: 'OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES', message: `'${address}' is not an IP address; list the proxy's exact addresses, comma-separated (no names or ranges)` });
    }
  }
  if (mode === 'production' && (header === '') !== (addresses.length === 0)) {
    problems.push({
      variable: header === '' ? 'OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER' : 'OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES',
      message: 'the identity header and the proxy addresses go together: set both, or neither (then only card links open advisory pages)',
    });
  }
  const ttlText = text(env, 'OXYGEN_CHECKER_REVIEW_LINK_TTL_S');
  let linkTtlS: number = REVIEW_DEFAULTS.OXYGEN_CHECKER_REVIEW_LINK_TTL_S;
  if (ttlText !== '') {
    if (!/^\d+$/.test(ttlText) || Number(ttlText) < REVIEW_LINK_TTL_RANGE_S.min || Number(ttlText) > REVIEW_LINK_TTL_RANGE_S.max) {
      problems.push({ variable: 'OXYGEN_CHECKER_REVIEW_LINK_TTL_S', message: 'must be a whole number of seconds from 60 to 604800 (7 days)' });
    } else {
      linkTtlS = Number(ttlText);
    }
  }
  if (problems.length > 0) {
    return { kind: 'invalid', problems };
  }
  const absolute = (path: string): string => (isAbsolute(path) ? path : resolve(cwd, path));
  const secretFile = text(env, 'OXYGEN_CHECKER_REVIEW_LINK_SECRET_FILE');
  return {
    kind: 'ok',
    config: Object.freeze({
      ...(header === '' ? {} : { identityHeader: header.toLowerCase() }),
      proxyAddresses: Object.freeze(addresses.map(normalisePeerAddress)),
      linkTtlS,
      linkSecretPath: secretFile === '' ? join(dataDir, REVIEW_DEFAULTS.REVIEW_LINK_SECRET_NAME) : absolute(secretFile),
      createLinkSecret: secretFile === '',
    }),
  };
}
