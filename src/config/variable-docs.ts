import type { VariableMeta } from './env-config.js';
import { REVIEW_DEFAULTS, REVIEW_LINK_TTL_RANGE_S } from './review-config.js';

/**
 * What each configuration variable means, for docs/configuration.md. Names, types, ranges and
 * defaults come from the parsers themselves (env-config.ts, review-config.ts); this table adds what a
 * parser cannot say: the description, the section it is listed under, and whether it is a secret.
 * A variable read without an entry here fails tests/config/config-reference.test.ts, naming it.
 */

export const VARIABLE_GROUPS = [
  'Service',
  'Policy and cards',
  'Load, limits and timeouts',
  'FHIR fallback',
  'Client tokens (production)',
  'Store',
  'Review pages',
] as const;
export type VariableGroup = (typeof VARIABLE_GROUPS)[number];

/**
 * `file`: the variable names a file that holds a secret (mount it from the secret store, owner-only).
 * `value`: the value itself is secret, so it may instead be read from the file named by `<NAME>_FILE`.
 */
export type SecretKind = 'file' | 'value';

export interface VariableDoc {
  readonly group: VariableGroup;
  /** One or two plain sentences: what it does, and when to change it. */
  readonly description: string;
  readonly secret?: SecretKind;
  /** The unit, when the name's suffix (`_MS`, `_S`, `_BYTES`, `_DAYS`, `_MIN`) does not say it. */
  readonly unit?: string;
  /** Accepted values, when the parser's kind alone (text) says too little. */
  readonly format?: string;
  /** The default as a reader should see it, when the parsed default is not (a bundled path). */
  readonly defaultText?: string;
  /** Type and default for a variable parsed outside env-config.ts's schema. */
  readonly meta?: VariableMeta;
}

export const VARIABLE_DOCS: Readonly<Record<string, VariableDoc>> = {
  HOST: {
    group: 'Service',
    description:
      'The address the service listens on. Demo mode accepts loopback only; production mode may listen on `0.0.0.0` (in a container) or the private interface a proxy forwards to.',
  },
  PORT: { group: 'Service', description: 'The TCP port the service listens on (plain HTTP; TLS is the proxy\'s).' },
  LOG_LEVEL: { group: 'Service', description: 'The pino log level. Logs never carry tokens or patient identifiers.' },
  OXYGEN_CHECKER_MODE: {
    group: 'Service',
    description:
      '`demo`: loopback only, authentication off, the review pages seeded with an invented shift. `production`: signed JWTs from the clients in the trust file only (docs/security.md).',
  },
  OXYGEN_CHECKER_TRUST: {
    group: 'Service',
    format: 'path',
    description:
      'Production: the trust file (YAML or JSON) naming the CDS clients allowed to call, with their public keys or key-set URLs. Holds no secret, but decides who may call: mount it read-only.',
  },
  OXYGEN_CHECKER_PUBLIC_URL: {
    group: 'Service',
    format: 'https URL',
    description:
      'Production: the https base URL clients call (e.g. `https://cds.example.org`); token audiences and card links are built from it.',
  },
  OXYGEN_CHECKER_BEHIND_TLS: {
    group: 'Service',
    description:
      '`true` when clients reach the service over HTTPS only (TLS here or at a proxy): sends HSTS. Always on in production mode.',
  },
  OXYGEN_CHECKER_CORS_ORIGINS: {
    group: 'Service',
    format: '`*` or comma-separated origins',
    description:
      'Browser origins allowed to call the CDS endpoints. `*` only suits the credential-free demo; in production list the EHR\'s origins.',
  },
  OXYGEN_CHECKER_POLICY: {
    group: 'Policy and cards',
    format: 'path',
    defaultText: '`policies/based-on-bts-2017.yaml` (demo mode only)',
    description:
      'The local oxygen policy file (targets, thresholds, site altitude, cautions; docs/policy.md). Production refuses to start unless it is set.',
  },
  OXYGEN_CHECKER_CARDS_DIR: {
    group: 'Policy and cards',
    format: 'path',
    description: 'The card wording, one YAML file per rule id.',
  },
  OXYGEN_CHECKER_POLICY_WATCH: {
    group: 'Policy and cards',
    description:
      '`true` also reloads the policy when its file or the cards folder changes on disk; SIGHUP always reloads (docs/policy.md, step 8).',
  },
  OXYGEN_CHECKER_BODY_LIMIT_BYTES: {
    group: 'Load, limits and timeouts',
    description: 'The largest hook request body accepted; larger ones get 413.',
  },
  OXYGEN_CHECKER_MAX_CONCURRENT: {
    group: 'Load, limits and timeouts',
    unit: 'hook calls',
    description: 'Hook calls evaluated at once by one process; past it a call gets 503 with Retry-After (docs/api.md, "Robustness").',
  },
  OXYGEN_CHECKER_MAX_CONCURRENT_PER_CLIENT: {
    group: 'Load, limits and timeouts',
    unit: 'hook calls',
    description: 'Hook calls one client (its token\'s issuer in production, its address in demo) may have evaluated at once; past it that client gets 429 with Retry-After, so a client whose sockets do not read or whose FHIR server hangs holds only its own share (docs/security.md, "Load and per-client shares"). At most OXYGEN_CHECKER_MAX_CONCURRENT.',
  },
  OXYGEN_CHECKER_MAX_LOOP_DELAY_MS: {
    group: 'Load, limits and timeouts',
    description: 'How late the event loop may run before new hook calls are shed with 503 and Retry-After: the measure of time spent waiting, so a call is refused early rather than answered past the CDS Hooks budget of about 500 ms (docs/api.md, "Load and shutdown").',
  },
  OXYGEN_CHECKER_MAX_WAIT_MS: {
    group: 'Load, limits and timeouts',
    description: 'How long a hook call may have waited before it is evaluated (the event loop\'s delay when it arrived, plus the time since, spent in authentication, where the token\'s signature check can queue on the thread pool, and reading its body); past it the call gets 503 with Retry-After, so it is refused rather than answered past the CDS Hooks budget of about 500 ms (docs/deployment.md, "Load shedding").',
  },
  OXYGEN_CHECKER_SHUTDOWN_GRACE_MS: {
    group: 'Load, limits and timeouts',
    description: 'How long calls in flight may take to finish after SIGTERM. Keep it below the orchestrator\'s termination grace period.',
  },
  OXYGEN_CHECKER_REQUEST_TIMEOUT_MS: {
    group: 'Load, limits and timeouts',
    description: 'How long a whole request (headers and body) may take to arrive; past it the client gets 408 (docs/security.md, "Timeouts").',
  },
  OXYGEN_CHECKER_HEADERS_TIMEOUT_MS: {
    group: 'Load, limits and timeouts',
    description: 'How long the request headers may take to arrive; not above the request timeout.',
  },
  OXYGEN_CHECKER_KEEP_ALIVE_TIMEOUT_MS: {
    group: 'Load, limits and timeouts',
    description: 'How long an idle kept-alive connection stays open. Set it above the idle timeout of any load balancer in front.',
  },
  OXYGEN_CHECKER_SOCKET_IDLE_TIMEOUT_MS: {
    group: 'Load, limits and timeouts',
    description: 'How long a socket may go without a byte in or out before it is cut.',
  },
  OXYGEN_CHECKER_FHIR_CALL_TIMEOUT_MS: {
    group: 'FHIR fallback',
    description: 'Time allowed for one FHIR request when the EHR did not prefetch the data.',
  },
  OXYGEN_CHECKER_FHIR_BUDGET_MS: {
    group: 'FHIR fallback',
    description: 'Time allowed for all FHIR requests of one hook call together; not below the per-call timeout.',
  },
  OXYGEN_CHECKER_FHIR_MAX_RESPONSE_BYTES: {
    group: 'FHIR fallback',
    description: 'The largest FHIR response body read.',
  },
  OXYGEN_CHECKER_FHIR_MAX_PAGES: {
    group: 'FHIR fallback',
    unit: 'pages',
    description: 'Searchset pages followed per prefetch key, the first included.',
  },
  OXYGEN_CHECKER_JWT_CLOCK_SKEW_S: {
    group: 'Client tokens (production)',
    description: 'Leeway on a client token\'s `exp`, `nbf` and `iat` for clock differences (RFC 7519 §4.1.4).',
  },
  OXYGEN_CHECKER_JWT_MAX_LIFETIME_S: {
    group: 'Client tokens (production)',
    description: 'The longest token lifetime (`exp - iat`) accepted, and so how long a `jti` is remembered against replay.',
  },
  OXYGEN_CHECKER_JWKS_TIMEOUT_MS: { group: 'Client tokens (production)', description: 'Time allowed for one key-set (JWKS) fetch.' },
  OXYGEN_CHECKER_JWKS_MAX_BYTES: { group: 'Client tokens (production)', description: 'The largest key-set response read.' },
  OXYGEN_CHECKER_JWKS_CACHE_TTL_S: {
    group: 'Client tokens (production)',
    description: 'How long a fetched key set is used before it is fetched again.',
  },
  OXYGEN_CHECKER_JWKS_REFRESH_MIN_INTERVAL_S: {
    group: 'Client tokens (production)',
    description: 'The shortest time between refreshes for an unknown `kid`, per issuer.',
  },
  OXYGEN_CHECKER_REPLAY_CACHE_MAX_ENTRIES: {
    group: 'Client tokens (production)',
    unit: 'token ids',
    description: 'Token ids (`jti`) held at once in the replay cache; when full, new tokens are refused.',
  },
  OXYGEN_CHECKER_REPLAY_MAX_PER_CLIENT: {
    group: 'Client tokens (production)',
    unit: 'token ids',
    description: 'Unexpired token ids one client may hold in the replay cache; past it that client gets 429 with Retry-After.',
  },
  OXYGEN_CHECKER_DATA_DIR: {
    group: 'Store',
    format: 'path',
    description:
      'The data directory, relative to the working directory: the SQLite store (audit trail, feedback, replay cache) and, unless configured, the patient-key and review-link secrets. Created owner-only.',
  },
  OXYGEN_CHECKER_METRICS: {
    group: 'Service',
    description:
      '`on` serves GET /metrics (Prometheus text) on the service\'s own port, without authentication: let only the scraper reach it (network policy or proxy; docs/security.md). `off` does not serve it. Demo mode serves it either way, on loopback.',
  },
  DATABASE_URL: {
    group: 'Store',
    format: 'postgresql:// URL',
    secret: 'value',
    description:
      'The PostgreSQL database several instances share (audit trail, feedback, replay cache); unset, the SQLite store in the data directory is used. It holds a password: give it as DATABASE_URL_FILE (docs/deployment.md).',
  },
  OXYGEN_CHECKER_PATIENT_KEY_FILE: {
    group: 'Store',
    format: 'path',
    secret: 'file',
    description:
      'The patient pseudonym secret (at least 32 bytes, owner-only), when you provide it; otherwise it is created in the data directory. Several instances must share it.',
  },
  OXYGEN_CHECKER_AUDIT_RETENTION_DAYS: {
    group: 'Store',
    description: 'How long an advisory and its feedback are kept. Your records policy decides; the default covers an annual audit with a margin.',
  },
  OXYGEN_CHECKER_PURGE_INTERVAL_MIN: {
    group: 'Store',
    description: 'Time between purges of expired advisories and token ids; the first runs at start.',
  },
  OXYGEN_CHECKER_FEEDBACK_MAX_ITEMS: {
    group: 'Store',
    unit: 'items',
    description: 'Feedback items in one request; more get 413.',
  },
  OXYGEN_CHECKER_FEEDBACK_MAX_PER_CLIENT_DAY: {
    group: 'Store',
    unit: 'records per client per UTC day',
    description: 'New feedback records one client may add per UTC day; past it the client gets 429.',
  },
  OXYGEN_CHECKER_REVIEW_IDENTITY_HEADER: {
    group: 'Review pages',
    format: 'header name',
    meta: { kind: 'text', default: '' },
    description:
      'Production: the header in which the sign-in proxy asserts the reviewer, e.g. `X-Authenticated-User`. Set together with the proxy addresses (docs/security.md, "Review pages").',
  },
  OXYGEN_CHECKER_REVIEW_PROXY_ADDRESSES: {
    group: 'Review pages',
    format: 'comma-separated IP addresses',
    meta: { kind: 'text', default: '' },
    description: 'Production: the sign-in proxy\'s exact IP addresses; the identity header is believed only from them.',
  },
  OXYGEN_CHECKER_REVIEW_LINK_TTL_S: {
    group: 'Review pages',
    meta: {
      kind: 'integer',
      default: REVIEW_DEFAULTS.OXYGEN_CHECKER_REVIEW_LINK_TTL_S,
      min: REVIEW_LINK_TTL_RANGE_S.min,
      max: REVIEW_LINK_TTL_RANGE_S.max,
    },
    description: 'How long a card\'s link opens its advisory page without the sign-in proxy.',
  },
  OXYGEN_CHECKER_REVIEW_LINK_SECRET_FILE: {
    group: 'Review pages',
    format: 'path',
    secret: 'file',
    meta: { kind: 'text', default: '' },
    description:
      'The review-link signing secret (at least 32 bytes, owner-only). Without it one is created in the data directory; several instances must share one.',
  },
  OXYGEN_CHECKER_WORKERS: {
    group: 'Service',
    unit: 'processes',
    description:
      '`1`: one process, as without it. More: a primary process that checks the settings and policy, migrates the store once, then forks that many worker processes sharing the port, replaces a worker that dies and passes SIGHUP and SIGTERM on. At most one per core; the load limits and per-client shares then apply per worker (docs/deployment.md, "Several workers on one host").',
  },
};
