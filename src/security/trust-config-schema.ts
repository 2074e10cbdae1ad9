import { z } from 'zod';
import { DEFAULT_ALGORITHMS, isSigningAlgorithm, keySuitsAlgorithm, refusedAlgorithmReason } from './algorithms.js';
import { preparePublicJwk } from './jwk-keys.js';

/**
 * The trust file (`OXYGEN_CHECKER_TRUST`): the CDS clients allowed to call, each with its keys and limits.
 * Strict: an unknown key is an error (a typo such as `jwksURL` must not silently disable a check).
 * JWKs themselves stay open (RFC 7517 §4: members not understood are ignored) but are checked by
 * `preparePublicJwk`. Key names are fixed by the project's issue 3 and documented in docs/security.md.
 */
export interface TrustSchemaOptions {
  /** False only in tests against loopback servers; production always requires https. */
  readonly requireHttps: boolean;
}

function urlString(options: TrustSchemaOptions, what: 'key' | 'fhir') {
  return z.string().superRefine((text, ctx) => {
    let url: URL;
    try {
      url = new URL(text);
    } catch {
      ctx.addIssue({ code: 'custom', message: 'must be an absolute URL' });
      return;
    }
    if (url.protocol !== 'https:' && (options.requireHttps || url.protocol !== 'http:')) {
      ctx.addIssue({ code: 'custom', message: 'must use https (CDS Hooks 2.0 §Security and Safety)' });
    }
    if (url.username !== '' || url.password !== '' || url.hash !== '') {
      ctx.addIssue({ code: 'custom', message: 'must not carry credentials or a fragment' });
    }
    if (what === 'fhir' && url.search !== '') {
      ctx.addIssue({ code: 'custom', message: 'must be a FHIR base URL, without a query' });
    }
  });
}

const AlgorithmSchema = z.string().superRefine((alg, ctx) => {
  const reason = refusedAlgorithmReason(alg);
  if (reason !== undefined) {
    ctx.addIssue({ code: 'custom', message: reason });
  }
});

const JwkSchema = z.unknown().superRefine((jwk, ctx) => {
  const outcome = preparePublicJwk(jwk);
  if (outcome.kind === 'refused') {
    ctx.addIssue({ code: 'custom', message: outcome.problem });
  }
});

const ALWAYS = { when: () => true } as const;

/** Cross-field checks. They run even when a field failed, so reading is defensive. */
function checkClient(client: unknown, ctx: z.RefinementCtx): void {
  if (client === null || typeof client !== 'object') {
    return;
  }
  const c = client as Record<string, unknown>;
  if ((c['jwks'] === undefined) === (c['jwksUrl'] === undefined)) {
    ctx.addIssue({ code: 'custom', message: 'give exactly one of jwks or jwksUrl' });
  }
  const algorithms = Array.isArray(c['algorithms'])
    ? c['algorithms'].filter(isSigningAlgorithm)
    : DEFAULT_ALGORITHMS;
  const keys = (c['jwks'] as { keys?: unknown } | undefined)?.keys;
  if (!Array.isArray(keys)) {
    return;
  }
  const seen = new Set<string>();
  keys.forEach((jwk: unknown, index) => {
    const outcome = preparePublicJwk(jwk);
    if (outcome.kind !== 'ok') {
      return;
    }
    if (seen.has(outcome.key.kid)) {
      ctx.addIssue({
        code: 'custom',
        path: ['jwks', 'keys', index],
        message: `kid '${outcome.key.kid}' is used by an earlier key`,
      });
    }
    seen.add(outcome.key.kid);
    if (!algorithms.some((alg) => keySuitsAlgorithm(outcome.key, alg))) {
      ctx.addIssue({
        code: 'custom',
        path: ['jwks', 'keys', index],
        message: `suits none of this client's algorithms (${algorithms.join(', ')})`,
      });
    }
  });
}

function checkFile(file: unknown, ctx: z.RefinementCtx): void {
  const clients = (file as { clients?: unknown } | null)?.clients;
  if (!Array.isArray(clients)) {
    return;
  }
  const seen = new Set<string>();
  clients.forEach((client: unknown, index) => {
    const iss = (client as { iss?: unknown } | null)?.iss;
    if (typeof iss !== 'string') {
      return;
    }
    if (seen.has(iss)) {
      ctx.addIssue({
        code: 'custom',
        path: ['clients', index, 'iss'],
        message: `'${iss}' is listed by an earlier client`,
      });
    }
    seen.add(iss);
  });
}

export function trustFileSchema(options: TrustSchemaOptions) {
  const ClientSchema = z
    .strictObject({
      iss: z
        .string({ error: 'must be the issuer exactly as the client puts it in iss' })
        .min(1, 'must be the issuer exactly as the client puts it in iss'),
      jwks: z.looseObject({ keys: z.array(JwkSchema).min(1, 'must hold at least one public key') }).optional(),
      jwksUrl: urlString(options, 'key').optional(),
      jkuAllowlist: z.array(urlString(options, 'key')).optional(),
      algorithms: z.array(AlgorithmSchema).min(1, 'must name at least one algorithm').optional(),
      tenants: z.array(z.string().min(1)).min(1, 'must name at least one tenant, or be left out').optional(),
      fhirServers: z.array(urlString(options, 'fhir'), {
        error: 'must list the FHIR base URLs the service may call for this client ([] for none)',
      }),
    })
    .superRefine(checkClient, ALWAYS);
  return z
    .strictObject({
      clients: z
        .array(ClientSchema, { error: 'must be a list of trusted CDS clients' })
        .min(1, 'must list at least one trusted CDS client'),
    })
    .superRefine(checkFile, ALWAYS);
}

export type TrustFile = z.infer<ReturnType<typeof trustFileSchema>>;
