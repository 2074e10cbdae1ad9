/**
 * Splits a JWS in compact serialisation (RFC 7515 §7.1) into its decoded parts without trusting any of
 * them. Anything that is not exactly three base64url segments (RFC 7515 §2, no padding) whose first
 * two decode to JSON objects (RFC 7515 §5.2 steps 1-3; RFC 7519 §7.2 step 10) is undefined.
 */
export interface DecodedJws {
  readonly header: Readonly<Record<string, unknown>>;
  readonly payload: Readonly<Record<string, unknown>>;
  /** ASCII(BASE64URL(header) || '.' || BASE64URL(payload)): what the signature covers. */
  readonly signingInput: Buffer;
  readonly signature: Buffer;
}

/** Bigger than any CDS client token needs; refused before any decoding work. */
export const MAX_TOKEN_LENGTH = 8192;

const BASE64URL = /^[A-Za-z0-9_-]+$/;
/** Empty for an unsecured JWS (RFC 7519 §6.1), so `alg: none` reaches the algorithm check and is named. */
const SIGNATURE = /^[A-Za-z0-9_-]*$/;

function decodeJsonObject(segment: string): Readonly<Record<string, unknown>> | undefined {
  let value: unknown;
  try {
    value = JSON.parse(Buffer.from(segment, 'base64url').toString('utf8'));
  } catch {
    return undefined;
  }
  return value !== null && typeof value === 'object' && !Array.isArray(value)
    ? (value as Readonly<Record<string, unknown>>)
    : undefined;
}

export function decodeCompactJws(token: string): DecodedJws | undefined {
  if (token.length > MAX_TOKEN_LENGTH) {
    return undefined;
  }
  const parts = token.split('.');
  if (parts.length !== 3) {
    return undefined;
  }
  const [head, body, signature] = parts as [string, string, string];
  if (!BASE64URL.test(head) || !BASE64URL.test(body) || !SIGNATURE.test(signature)) {
    return undefined;
  }
  const header = decodeJsonObject(head);
  const payload = decodeJsonObject(body);
  if (header === undefined || payload === undefined) {
    return undefined;
  }
  return {
    header,
    payload,
    signingInput: Buffer.from(`${head}.${body}`, 'ascii'),
    signature: Buffer.from(signature, 'base64url'),
  };
}
