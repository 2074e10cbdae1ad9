import { createHmac, timingSafeEqual } from 'node:crypto';
import { z } from 'zod';

/**
 * The signed token a card's review link carries in production: it opens one advisory page (and its
 * JSON) for a short time, without the hospital sign-in, so a clinician can follow the link from the
 * EHR. Format: `base64url(JSON {cardUuid, exp}) "." base64url(HMAC-SHA256(secret, "review-link.v1." +
 * payload))`, exp in seconds since the epoch (RFC 7519 §2 NumericDate). The label in the MAC keeps
 * this secret's signatures from meaning anything elsewhere. The token is a bearer credential: it is
 * never logged (the request log names routes, never URLs) and the pages send `Referrer-Policy:
 * no-referrer` so it does not leak onward.
 */

const MAC_LABEL = 'review-link.v1.';
/** Longer than any token this module signs; anything longer is refused before any work. */
export const MAX_TOKEN_LENGTH = 512;
const BASE64URL = /^[A-Za-z0-9_-]+$/;
/** SHA-256 output length in bytes (FIPS 180-4). */
const MAC_BYTES = 32;

const PayloadSchema = z.strictObject({
  cardUuid: z.string().min(1).max(200),
  exp: z.number().int().positive(),
});

export type LinkTokenCheck =
  | { readonly kind: 'valid'; readonly exp: number }
  | { readonly kind: 'invalid'; readonly reason: 'malformed' | 'bad-signature' | 'other-advisory' | 'expired' };

function mac(secret: Uint8Array, payload: string): Buffer {
  return createHmac('sha256', secret).update(MAC_LABEL + payload).digest();
}

/** Signs a link token for one advisory, valid until `expS` (seconds since the epoch). */
export function signReviewLinkToken(secret: Uint8Array, cardUuid: string, expS: number): string {
  const payload = Buffer.from(JSON.stringify({ cardUuid, exp: expS })).toString('base64url');
  return `${payload}.${mac(secret, payload).toString('base64url')}`;
}

/**
 * Checks a token for the advisory `cardUuid` at `nowMs`. The MAC is compared in constant time before
 * the payload is read, so nothing about an unsigned payload is acted on; a valid token for another
 * advisory, or one past its exp, is refused.
 */
export function checkReviewLinkToken(secret: Uint8Array, token: string, cardUuid: string, nowMs: number): LinkTokenCheck {
  if (token.length > MAX_TOKEN_LENGTH) {
    return { kind: 'invalid', reason: 'malformed' };
  }
  const parts = token.split('.');
  const [payload, signature] = parts;
  if (parts.length !== 2 || payload === undefined || signature === undefined || !BASE64URL.test(payload) || !BASE64URL.test(signature)) {
    return { kind: 'invalid', reason: 'malformed' };
  }
  const given = Buffer.from(signature, 'base64url');
  if (given.length !== MAC_BYTES || !timingSafeEqual(given, mac(secret, payload))) {
    return { kind: 'invalid', reason: 'bad-signature' };
  }
  let claims: unknown;
  try {
    claims = JSON.parse(Buffer.from(payload, 'base64url').toString('utf8'));
  } catch {
    return { kind: 'invalid', reason: 'malformed' };
  }
  const parsed = PayloadSchema.safeParse(claims);
  if (!parsed.success) {
    return { kind: 'invalid', reason: 'malformed' };
  }
  if (parsed.data.cardUuid !== cardUuid) {
    return { kind: 'invalid', reason: 'other-advisory' };
  }
  if (parsed.data.exp * 1000 <= nowMs) {
    return { kind: 'invalid', reason: 'expired' };
  }
  return { kind: 'valid', exp: parsed.data.exp };
}

export interface ReviewLinkSettings {
  /** The service's public base URL, without a trailing slash; read when a link is made. */
  readonly baseUrl: () => string;
  /** Production signs each link; the loopback demo (open) leaves the token out. */
  readonly signing?: { readonly secret: Uint8Array; readonly ttlS: number; readonly clock: () => Date };
}

/** Makes the absolute URL of an advisory page, with a fresh token when signing is configured. */
export function createReviewLinker(settings: ReviewLinkSettings): (cardUuid: string) => string {
  return (cardUuid) => {
    const path = `${settings.baseUrl()}/review/advisories/${encodeURIComponent(cardUuid)}`;
    const signing = settings.signing;
    if (signing === undefined) {
      return path;
    }
    const expS = Math.floor(signing.clock().getTime() / 1000) + signing.ttlS;
    return `${path}?token=${signReviewLinkToken(signing.secret, cardUuid, expS)}`;
  };
}
