/**
 * The service's public base URL (`OXYGEN_CHECKER_PUBLIC_URL`) and the audience a token must name. CDS Hooks
 * 2.0 §Trusting CDS Clients: `aud` is the URL of the endpoint being invoked. It is built from the
 * configured base plus the path called, never from the Host or X-Forwarded-* headers, which a caller
 * (or a proxy) controls.
 */

export type PublicUrlParse =
  | { readonly kind: 'ok'; readonly base: string }
  | { readonly kind: 'invalid'; readonly message: string };

function withoutTrailingSlashes(text: string): string {
  return text.replace(/\/+$/, '');
}

/** Scheme, host, port and path of an absolute URL, no trailing slash; undefined if it has more. */
function normaliseUrl(text: string): string | undefined {
  let url: URL;
  try {
    url = new URL(text);
  } catch {
    return undefined;
  }
  if (url.search !== '' || url.hash !== '' || url.username !== '' || url.password !== '') {
    return undefined;
  }
  return `${url.origin}${withoutTrailingSlashes(url.pathname)}`;
}

/**
 * Checks and normalises the base URL: absolute, https unless `requireHttps` is false (tests only),
 * no query, fragment or credentials, and not already ending in `/cds-services` (the paths are added).
 */
export function parsePublicBaseUrl(text: string, options: { readonly requireHttps: boolean }): PublicUrlParse {
  let url: URL;
  try {
    url = new URL(text.trim());
  } catch {
    return { kind: 'invalid', message: 'must be an absolute URL such as https://cds.example.org' };
  }
  if (url.protocol !== 'https:' && (options.requireHttps || url.protocol !== 'http:')) {
    return { kind: 'invalid', message: 'must use https (CDS Hooks 2.0 §Security and Safety)' };
  }
  const base = normaliseUrl(url.href);
  if (base === undefined) {
    return { kind: 'invalid', message: 'must not carry a query, fragment or user name' };
  }
  if (/\/cds-services$/.test(base)) {
    return { kind: 'invalid', message: 'must be the base URL, without /cds-services (it is added per call)' };
  }
  return { kind: 'ok', base };
}

/**
 * The audience expected for a request: the base plus the raw path called (query dropped, trailing
 * slashes removed). The raw path is used as sent, so `..` or re-encoded paths match no token.
 */
export function endpointAudience(base: string, originalUrl: string): string {
  const path = originalUrl.split('?')[0] ?? '';
  return `${base}${withoutTrailingSlashes(path)}`;
}

/**
 * RFC 7519 §4.1.3: `aud` is a string or an array of strings, and the recipient must find itself in
 * it. Each value is compared after the same URL normalisation as the base (scheme and host case,
 * default port, trailing slash); a value that is not such a URL matches nothing.
 */
export function audienceMatches(aud: unknown, expected: string): boolean {
  const values = typeof aud === 'string' ? [aud] : Array.isArray(aud) ? aud : [];
  if (values.length === 0 || !values.every((value) => typeof value === 'string')) {
    return false;
  }
  return values.some((value) => normalisedAudience(value) === expected);
}

/**
 * `normaliseUrl` remembered for the audiences lately seen: a client names the same few endpoint URLs
 * in every token, and parsing a URL is the check's largest cost after the signature. Only values from
 * tokens whose signature has been verified reach it, and it is emptied when full, so it stays small.
 */
const AUDIENCES_REMEMBERED = 256;
const normalisedAudiences = new Map<string, string | undefined>();

function normalisedAudience(value: string): string | undefined {
  if (normalisedAudiences.has(value)) {
    return normalisedAudiences.get(value);
  }
  if (normalisedAudiences.size >= AUDIENCES_REMEMBERED) {
    normalisedAudiences.clear();
  }
  const normalised = normaliseUrl(value);
  normalisedAudiences.set(value, normalised);
  return normalised;
}
