import { createHmac, generateKeyPairSync, sign, constants, type KeyObject } from 'node:crypto';

/**
 * Key pairs made in the test with node:crypto (no key here belongs to anyone), and a JWS signer that
 * does not share code with the service's verifier, so a passing test means two implementations of
 * RFC 7515 agree.
 */
export type TestAlg = 'ES256' | 'ES384' | 'ES512' | 'RS256' | 'RS384' | 'RS512' | 'PS256' | 'PS384' | 'PS512';

export interface TestKey {
  readonly kid: string;
  readonly alg: TestAlg;
  readonly privateKey: KeyObject;
  readonly publicKey: KeyObject;
  /** The public JWK with `kid`, as a client would publish it. */
  readonly publicJwk: Readonly<Record<string, unknown>>;
}

const CURVES = { ES256: 'P-256', ES384: 'P-384', ES512: 'P-521' } as const;

export function makeKey(alg: TestAlg, kid: string, options: { rsaBits?: number } = {}): TestKey {
  const pair = alg.startsWith('ES')
    ? generateKeyPairSync('ec', { namedCurve: CURVES[alg as keyof typeof CURVES] })
    : generateKeyPairSync('rsa', { modulusLength: options.rsaBits ?? 2048 });
  const publicJwk = { ...pair.publicKey.export({ format: 'jwk' }), kid, use: 'sig', alg };
  return { kid, alg, privateKey: pair.privateKey, publicKey: pair.publicKey, publicJwk };
}

const HASHES = { '256': 'sha256', '384': 'sha384', '512': 'sha512' } as const;

function encode(part: unknown): string {
  return Buffer.from(JSON.stringify(part)).toString('base64url');
}

/** Signs `header.payload` with the named algorithm, whatever the header claims. */
export function signWith(
  alg: TestAlg | 'HS256' | 'none',
  header: Readonly<Record<string, unknown>>,
  payload: Readonly<Record<string, unknown>>,
  key: KeyObject | Buffer | string | undefined,
): string {
  const input = `${encode(header)}.${encode(payload)}`;
  if (alg === 'none') {
    return `${input}.`;
  }
  if (alg === 'HS256') {
    return `${input}.${createHmac('sha256', key as Buffer | string).update(input).digest('base64url')}`;
  }
  const hash = HASHES[alg.slice(2) as keyof typeof HASHES];
  const privateKey = key as KeyObject;
  const signature = alg.startsWith('ES')
    ? sign(hash, Buffer.from(input), { key: privateKey, dsaEncoding: 'ieee-p1363' })
    : alg.startsWith('PS')
      ? sign(hash, Buffer.from(input), {
          key: privateKey,
          padding: constants.RSA_PKCS1_PSS_PADDING,
          saltLength: constants.RSA_PSS_SALTLEN_DIGEST,
        })
      : sign(hash, Buffer.from(input), privateKey);
  return `${input}.${signature.toString('base64url')}`;
}

/** A token signed by `key` with its own algorithm and kid; `header` adds to or overrides the header. */
export function signToken(
  key: TestKey,
  payload: Readonly<Record<string, unknown>>,
  header: Readonly<Record<string, unknown>> = {},
): string {
  return signWith(key.alg, { alg: key.alg, typ: 'JWT', kid: key.kid, ...header }, payload, key.privateKey);
}
