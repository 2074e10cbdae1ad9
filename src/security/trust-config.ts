import { readFile } from 'node:fs/promises';
import { parse as parseYaml } from 'yaml';
import { DEFAULT_ALGORITHMS, isSigningAlgorithm, type SigningAlgorithm } from './algorithms.js';
import { buildKeySet, preparePublicJwk, type KeySet, type PreparedKey } from './jwk-keys.js';
import { trustFileSchema, type TrustFile, type TrustSchemaOptions } from './trust-config-schema.js';

/**
 * The trust configuration as the verifier uses it: clients by exact `iss`, static keys already turned
 * into KeyObjects, URLs normalised. Loaded and checked once at start-up; every problem is listed.
 */
export type ClientKeySource =
  | { readonly kind: 'static'; readonly keys: KeySet }
  | { readonly kind: 'remote'; readonly url: string };

export interface TrustedClient {
  /** Compared with the token's `iss` exactly (RFC 7519 §4.1.1: case-sensitive StringOrURI). */
  readonly iss: string;
  readonly keySource: ClientKeySource;
  /** `jku` values honoured for this client, as normalised URLs (`URL.href`). */
  readonly jkuAllowlist: readonly string[];
  readonly algorithms: readonly SigningAlgorithm[];
  /** When present, every token must carry one of these in `tenant`. */
  readonly tenants: readonly string[] | undefined;
  /** FHIR base URLs the service may call with this client's `fhirAuthorization` tokens. */
  readonly fhirServers: readonly string[];
}

export interface TrustConfig {
  readonly clients: ReadonlyMap<string, TrustedClient>;
}

export interface TrustProblem {
  /** Dot path inside the file, `(file)` for the file as a whole. */
  readonly path: string;
  readonly message: string;
}

export type TrustParse =
  | { readonly kind: 'ok'; readonly trust: TrustConfig }
  | { readonly kind: 'invalid'; readonly problems: readonly TrustProblem[] };

function toClient(entry: TrustFile['clients'][number]): TrustedClient {
  let keySource: ClientKeySource;
  if (entry.jwks !== undefined) {
    const keys: PreparedKey[] = [];
    for (const jwk of entry.jwks.keys) {
      const outcome = preparePublicJwk(jwk);
      if (outcome.kind === 'ok') {
        keys.push(outcome.key);
      }
    }
    keySource = { kind: 'static', keys: buildKeySet(keys) };
  } else {
    keySource = { kind: 'remote', url: new URL(entry.jwksUrl ?? '').href };
  }
  const algorithms = entry.algorithms === undefined ? DEFAULT_ALGORITHMS : entry.algorithms.filter(isSigningAlgorithm);
  return Object.freeze({
    iss: entry.iss,
    keySource: Object.freeze(keySource),
    jkuAllowlist: Object.freeze((entry.jkuAllowlist ?? []).map((url) => new URL(url).href)),
    algorithms: Object.freeze([...new Set(algorithms)]),
    tenants: entry.tenants === undefined ? undefined : Object.freeze([...entry.tenants]),
    fhirServers: Object.freeze([...entry.fhirServers]),
  });
}

/** Validates an already-parsed trust file. Pure. */
export function parseTrustObject(input: unknown, options: TrustSchemaOptions): TrustParse {
  const parsed = trustFileSchema(options).safeParse(input);
  if (!parsed.success) {
    return {
      kind: 'invalid',
      problems: parsed.error.issues.map((issue) => ({
        path: issue.path.map(String).join('.') || '(root)',
        message: issue.message,
      })),
    };
  }
  const clients = new Map(parsed.data.clients.map((entry) => [entry.iss, toClient(entry)] as const));
  return { kind: 'ok', trust: Object.freeze({ clients }) };
}

/** Parses YAML or JSON (JSON is YAML 1.2) text; duplicate keys are an error, as in the policy file. */
export function parseTrustText(text: string, options: TrustSchemaOptions): TrustParse {
  let raw: unknown;
  try {
    raw = parseYaml(text, { prettyErrors: true });
  } catch (error) {
    const message = error instanceof Error ? error.message.split('\n')[0] : undefined;
    return { kind: 'invalid', problems: [{ path: '(file)', message: message ?? 'is not readable YAML or JSON' }] };
  }
  return parseTrustObject(raw, options);
}

export async function loadTrustFile(path: string, options: TrustSchemaOptions): Promise<TrustParse> {
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (error) {
    const code = (error as { code?: unknown } | null)?.code;
    const message = typeof code === 'string' ? `cannot be read (${code})` : 'cannot be read';
    return { kind: 'invalid', problems: [{ path: '(file)', message }] };
  }
  return parseTrustText(text, options);
}

/** One problem a line: `file: path: message`, as for the policy file. */
export function formatTrustProblems(file: string, problems: readonly TrustProblem[]): string {
  return problems.map((p) => `${file}: ${p.path}: ${p.message}`).join('\n');
}
