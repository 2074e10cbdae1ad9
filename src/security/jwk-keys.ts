import { createPublicKey, type JsonWebKey, type KeyObject } from 'node:crypto';
import { SIGNING_ALGORITHMS, isSigningAlgorithm, keySuitsAlgorithm, type EcCurve, type KeyShape } from './algorithms.js';

/**
 * Public JWKs (RFC 7517) turned into node KeyObjects once, when the trust file is loaded or a JWKS is
 * fetched, so a token check never parses key material again (toolchain notes: ES384 verification with
 * a prepared KeyObject is ~20 % cheaper than with a PEM string each call).
 */
export interface PreparedKey extends KeyShape {
  readonly kid: string;
  readonly keyObject: KeyObject;
}

/** Keys by `kid`. RFC 7517 §4.5 lets two keys of different types share one, so each holds a list. */
export type KeySet = ReadonlyMap<string, readonly PreparedKey[]>;

export type PrepareOutcome =
  | { readonly kind: 'ok'; readonly key: PreparedKey }
  | { readonly kind: 'refused'; readonly problem: string };

/** RFC 7518 §6.2.2 and §6.3.2: the members only a private key has. */
const PRIVATE_MEMBERS = ['d', 'p', 'q', 'dp', 'dq', 'qi', 'oth', 'k'] as const;

const NODE_CURVES: Readonly<Record<EcCurve, string>> = {
  'P-256': 'prime256v1',
  'P-384': 'secp384r1',
  'P-521': 'secp521r1',
};

function isCurve(value: unknown): value is EcCurve {
  return typeof value === 'string' && Object.hasOwn(NODE_CURVES, value);
}

function refuse(problem: string): PrepareOutcome {
  return { kind: 'refused', problem };
}

/** Only the public members go to node, so nothing else a JWK carries can change what key is built. */
function publicMembers(jwk: Readonly<Record<string, unknown>>): JsonWebKey | undefined {
  if (jwk['kty'] === 'EC') {
    const { crv, x, y } = jwk;
    return typeof x === 'string' && typeof y === 'string' && typeof crv === 'string'
      ? { kty: 'EC', crv, x, y }
      : undefined;
  }
  const { n, e } = jwk;
  return typeof n === 'string' && typeof e === 'string' ? { kty: 'RSA', n, e } : undefined;
}

/**
 * Checks one public signing JWK and builds its KeyObject. Refused: private or symmetric keys, keys
 * without a printable ASCII `kid`, `use` other than `sig`, `key_ops` without `verify`, curves and
 * sizes RFC 7518 does not allow for signing, and an `alg` that is not one of ours or does not fit it.
 */
export function preparePublicJwk(input: unknown): PrepareOutcome {
  if (input === null || typeof input !== 'object' || Array.isArray(input)) {
    return refuse('must be a JWK object');
  }
  const jwk = input as Readonly<Record<string, unknown>>;
  const { kty, kid, use, alg } = jwk;
  if (kty === 'oct') {
    return refuse("is a symmetric key (kty 'oct'), which is never accepted");
  }
  const secret = PRIVATE_MEMBERS.filter((member) => Object.hasOwn(jwk, member));
  if (secret.length > 0) {
    return refuse(
      `holds private key material (${secret.map((m) => `'${m}'`).join(', ')}); give public keys only`,
    );
  }
  if (kty !== 'EC' && kty !== 'RSA') {
    return refuse("must have kty 'EC' or 'RSA'");
  }
  if (typeof kid !== 'string' || kid === '') {
    return refuse("must have a non-empty 'kid' (tokens name their key by kid)");
  }
  // A kid is matched to the token's as an exact string. Beyond printable ASCII the same name has
  // several spellings (Unicode normalisation forms; libraries that read headers as Latin-1), and a
  // key only one of them reaches would fail at random: refused here, loudly, rather than never matched.
  if (!/^[\x20-\x7e]+$/.test(kid)) {
    return refuse("must have a 'kid' of printable ASCII characters");
  }
  if (use !== undefined && use !== 'sig') {
    return refuse("has 'use' other than 'sig'");
  }
  const keyOps = jwk['key_ops'];
  if (keyOps !== undefined && !(Array.isArray(keyOps) && keyOps.includes('verify'))) {
    return refuse("has 'key_ops' without 'verify'");
  }
  if (alg !== undefined && !isSigningAlgorithm(alg)) {
    return refuse(`has 'alg' other than one of ${SIGNING_ALGORITHMS.join(', ')}`);
  }
  if (kty === 'EC' && !isCurve(jwk['crv'])) {
    return refuse("must have crv 'P-256', 'P-384' or 'P-521'");
  }
  const members = publicMembers(jwk);
  if (members === undefined) {
    return refuse(kty === 'EC' ? "must have string 'x' and 'y'" : "must have string 'n' and 'e'");
  }
  let keyObject: KeyObject;
  try {
    keyObject = createPublicKey({ key: members, format: 'jwk' });
  } catch {
    return refuse('is not a valid public key');
  }
  const details = keyObject.asymmetricKeyDetails ?? {};
  const crv = isCurve(jwk['crv']) ? jwk['crv'] : undefined;
  if (kty === 'EC' && (crv === undefined || details.namedCurve !== NODE_CURVES[crv])) {
    return refuse('is not a valid public key on its curve');
  }
  const key: PreparedKey = {
    kid,
    kty,
    crv: kty === 'EC' ? crv : undefined,
    modulusBits: kty === 'RSA' ? details.modulusLength : undefined,
    alg: typeof alg === 'string' ? alg : undefined,
    keyObject,
  };
  if (!SIGNING_ALGORITHMS.some((candidate) => keySuitsAlgorithm(key, candidate))) {
    return refuse(
      kty === 'RSA'
        ? 'is an RSA key shorter than 2048 bits (RFC 7518 §3.3)'
        : `does not fit its 'alg' (RFC 7518 §3.4)`,
    );
  }
  return { kind: 'ok', key };
}

export function buildKeySet(keys: readonly PreparedKey[]): KeySet {
  const byKid = new Map<string, PreparedKey[]>();
  for (const key of keys) {
    byKid.set(key.kid, [...(byKid.get(key.kid) ?? []), key]);
  }
  return byKid;
}

/**
 * Reads a fetched JWK Set (RFC 7517 §5): its usable public signing keys, and how many entries were
 * skipped (RFC 7517 §5: members not understood are ignored). Undefined when it is not a JWK Set.
 */
export function readJwkSet(json: unknown): { readonly keys: KeySet; readonly skipped: number } | undefined {
  if (json === null || typeof json !== 'object' || Array.isArray(json)) {
    return undefined;
  }
  const list = (json as { keys?: unknown }).keys;
  if (!Array.isArray(list)) {
    return undefined;
  }
  const prepared: PreparedKey[] = [];
  for (const entry of list) {
    const outcome = preparePublicJwk(entry);
    if (outcome.kind === 'ok') {
      prepared.push(outcome.key);
    }
  }
  return { keys: buildKeySet(prepared), skipped: list.length - prepared.length };
}
