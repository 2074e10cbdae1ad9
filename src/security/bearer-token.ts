/**
 * Reads `Authorization: Bearer <token>` (RFC 6750 §2.1). The scheme is case-insensitive (RFC 9110
 * §11.1). No header, or another scheme, means "no credentials" (RFC 6750 §3.1: no error code then);
 * a Bearer header whose token is not b64token syntax is a malformed token.
 */
export type BearerRead =
  | { readonly kind: 'none' }
  | { readonly kind: 'malformed' }
  | { readonly kind: 'token'; readonly token: string };

/** RFC 6750 §2.1: b64token = 1*( ALPHA / DIGIT / "-" / "." / "_" / "~" / "+" / "/" ) *"=" */
const B64TOKEN = /^[A-Za-z0-9\-._~+/]+=*$/;

export function readBearerToken(header: string | undefined): BearerRead {
  if (header === undefined || header.trim() === '') {
    return { kind: 'none' };
  }
  const match = /^([A-Za-z0-9!#$%&'*+.^_`|~-]+)(?: +(.*))?$/.exec(header.trim());
  if (match === null) {
    return { kind: 'malformed' };
  }
  if (match[1]?.toLowerCase() !== 'bearer') {
    return { kind: 'none' };
  }
  const token = match[2] ?? '';
  return B64TOKEN.test(token) ? { kind: 'token', token } : { kind: 'malformed' };
}
