import { isAbsolute, resolve } from 'node:path';
import { z } from 'zod';
import { isLoopbackHost } from '../security/loopback.js';
import { parsePublicBaseUrl } from '../security/public-url.js';
import { bundledPath } from './package-root.js';
import { REVIEW_VARIABLES } from './review-config.js';
import { renamedVariables, unknownVariables } from './unknown-variables.js';

/**
 * The service's settings, read once from the environment at start-up, checked in full (every problem
 * listed, not only the first), frozen, and passed to `createApp`. Nothing reads `process.env` later.
 */

export const LOG_LEVELS = ['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent'] as const;
export type LogLevel = (typeof LOG_LEVELS)[number];

/** `demo`: loopback only, authentication off. `production`: signed JWTs from trusted clients only. */
export const MODES = ['demo', 'production'] as const;
export type Mode = (typeof MODES)[number];
export const METRICS_SETTINGS = ['off', 'on'] as const;

/** The prefix of the service's own variables: any other name with it is refused, not ignored. */
export const CONFIG_PREFIX = 'OXYGEN_CHECKER_';

/**
 * The prefix the same settings had before version 0.2. A variable left over from an older deployment
 * is refused with its new name, so an upgrade cannot silently drop a setting back to its default.
 */
export const RETIRED_PREFIX = 'O2CHECK_';

/** Defaults in one place, each with its unit. */
export const ENV_DEFAULTS = {
  HOST: '127.0.0.1', // loopback: the demo is not reachable from other machines unless asked
  PORT: 8080,
  // Demo mode only (and the command line): production refuses to start without its own policy.
  OXYGEN_CHECKER_POLICY: bundledPath('policies', 'based-on-bts-2017.yaml'),
  OXYGEN_CHECKER_CARDS_DIR: bundledPath('cards'),
  // Off: a policy change is loaded on SIGHUP, when the operator says so. On: also when the policy
  // file or the cards folder changes on disk (src/live-policy/watch-policy.ts).
  OXYGEN_CHECKER_POLICY_WATCH: false,
  LOG_LEVEL: 'info' as LogLevel,
  OXYGEN_CHECKER_BODY_LIMIT_BYTES: 1_048_576, // bytes (1 MiB); larger hook requests get 413
  // Allowed browser origins for CORS, comma-separated; `*` only suits the credential-free demo.
  OXYGEN_CHECKER_CORS_ORIGINS: '*',
  // CDS Hooks 2.0 §Providing FHIR Resources asks for answers "on the order of 500 ms"; the fallback
  // only runs when prefetch was not supplied, so these bound the slow path rather than the usual one.
  OXYGEN_CHECKER_FHIR_CALL_TIMEOUT_MS: 1500, // milliseconds per FHIR request
  OXYGEN_CHECKER_FHIR_BUDGET_MS: 2000, // milliseconds for all FHIR requests and pages of one hook call together
  OXYGEN_CHECKER_FHIR_MAX_RESPONSE_BYTES: 2_097_152, // bytes (2 MiB) per FHIR response body
  OXYGEN_CHECKER_FHIR_MAX_PAGES: 5, // searchset pages followed per prefetch key, the first included
  // Robustness (docs/api.md, "Robustness"): past the cap a hook call gets 503 with Retry-After.
  OXYGEN_CHECKER_MAX_CONCURRENT: 16, // hook calls evaluated at once
  OXYGEN_CHECKER_SHUTDOWN_GRACE_MS: 10_000, // milliseconds in-flight calls may take after SIGTERM
  // Connection timeouts (docs/security.md, "Timeouts"). A hook call's body is at most 1 MiB and CDS
  // Hooks 2.0 asks for answers "on the order of 500 ms", so a client still sending after 10 s is
  // stalled or hostile; without these Node holds a slow body for 300 s (its requestTimeout default).
  OXYGEN_CHECKER_REQUEST_TIMEOUT_MS: 10_000, // milliseconds for a whole request (headers and body) to arrive
  OXYGEN_CHECKER_HEADERS_TIMEOUT_MS: 5_000, // milliseconds for the request headers to arrive
  // Node's own default; set it above any load balancer's idle timeout in front, or the proxy may
  // reuse a connection the service is closing (common practice).
  OXYGEN_CHECKER_KEEP_ALIVE_TIMEOUT_MS: 5_000, // milliseconds an idle kept-alive connection stays open
  // Inactivity either way on a socket: a client that stops sending, or stops reading its answer. Above
  // the FHIR budget, so a slow fallback is never taken for an idle client.
  OXYGEN_CHECKER_SOCKET_IDLE_TIMEOUT_MS: 30_000, // milliseconds without a byte in or out before a socket is cut
  OXYGEN_CHECKER_BEHIND_TLS: false, // true when clients reach the service over HTTPS only: sends HSTS
  OXYGEN_CHECKER_MODE: 'demo' as Mode,
  // Client JWT checks (docs/security.md). RFC 7519 §4.1.4 allows "a small leeway" for clock skew;
  // CDS Hooks best practices keep client JWTs to at most an hour.
  OXYGEN_CHECKER_JWT_CLOCK_SKEW_S: 60, // seconds of leeway on exp, nbf and iat
  OXYGEN_CHECKER_JWT_MAX_LIFETIME_S: 3600, // seconds: longest exp - iat accepted, and so the replay window
  OXYGEN_CHECKER_JWKS_TIMEOUT_MS: 2000, // milliseconds per JWKS fetch
  OXYGEN_CHECKER_JWKS_MAX_BYTES: 65_536, // bytes (64 KiB) per JWKS response
  OXYGEN_CHECKER_JWKS_CACHE_TTL_S: 300, // seconds a fetched JWKS is used before it is fetched again
  OXYGEN_CHECKER_JWKS_REFRESH_MIN_INTERVAL_S: 60, // seconds: window for an issuer's unknown-kid refreshes (5 in each)
  OXYGEN_CHECKER_REPLAY_CACHE_MAX_ENTRIES: 100_000, // jti values held at once; when full, new tokens are refused
  // The store (docs/security.md, "Memory"). Relative to the working directory, like the other paths.
  OXYGEN_CHECKER_DATA_DIR: './data',
  // days an advisory and its feedback are kept: a year of review (an annual audit of override rates)
  // plus a margin for the review to happen late; the local records policy decides, not this default
  OXYGEN_CHECKER_AUDIT_RETENTION_DAYS: 400,
  // minutes between purges of expired advisories and token ids; the first runs at start. Hourly keeps
  // each purge small and retention accurate to within an hour of a 400-day period.
  OXYGEN_CHECKER_PURGE_INTERVAL_MIN: 60,
  // feedback items in one request: an EHR sends one item per card acted on, a handful per order; 50
  // leaves room for a batch resend without letting one request hold a large share of a daily quota
  OXYGEN_CHECKER_FEEDBACK_MAX_ITEMS: 50,
  // feedback records one client may add per UTC day: a 1,000-bed hospital firing a few cards per
  // order on a few thousand orders a day sends well under this; past it the client gets 429
  OXYGEN_CHECKER_FEEDBACK_MAX_PER_CLIENT_DAY: 20_000,
  // live jti values one client (iss, with tenant when its trust entry lists tenants) may hold in the
  // store's replay cache; at about 5 calls a second with 1-hour tokens a client holds about 18,000.
  // Past it that client alone gets 429; the store's total is bounded by this times the client shares.
  OXYGEN_CHECKER_REPLAY_MAX_PER_CLIENT: 20_000,
  // hook calls one client (its token's issuer; its address in the demo) may have evaluated at once:
  // half the shared cap, so a client whose calls hang on its FHIR server, or whose sockets do not
  // read, leaves at least half the slots to others. Past it that client alone gets 429. Used as at
  // most OXYGEN_CHECKER_MAX_CONCURRENT. A site with one EHR calling may raise it to that cap.
  OXYGEN_CHECKER_MAX_CONCURRENT_PER_CLIENT: 8,
  // milliseconds the event loop may run late (work waiting for the CPU) before new hook calls get 503
  // with Retry-After (src/http/loop-delay.ts). CDS Hooks 2.0 asks for answers "on the order of
  // 500 ms". A call read this late has waited about that long already, and waits about as long again
  // for each turn it still needs (its store write, its answer), so a fifth of the budget keeps a call
  // admitted now within it; past that, a quick 503 serves the EHR better than a late answer.
  OXYGEN_CHECKER_MAX_LOOP_DELAY_MS: 100,
  // milliseconds a hook call may have waited, from before Node read it (the loop's delay then) through
  // authentication (its signature check queues on libuv's thread pool) and its body, before it is
  // evaluated; past it, 503 with Retry-After (src/http/overload.ts). Half of the "on the order of
  // 500 ms" CDS Hooks 2.0 asks for, leaving the other half for what comes after admission: the
  // evaluation (about a millisecond of CPU, behind at most OXYGEN_CHECKER_MAX_CONCURRENT others), the
  // audit commit (a few milliseconds on SQLite, more on a networked PostgreSQL) and, when prefetch is
  // missing, one round of FHIR searches (commonly 100-200 ms on a hospital network, from memory).
  OXYGEN_CHECKER_MAX_WAIT_MS: 250,
  // The store (docs/api.md, "Settings"; src/store/README.md): a postgres:// URL puts the audit trail,
  // feedback and replay cache in one PostgreSQL database shared by every instance; empty keeps the
  // embedded SQLite store in OXYGEN_CHECKER_DATA_DIR (one instance).
  DATABASE_URL: '',
  // GET /metrics (Prometheus text, src/http/metrics.ts): `off` in production unless turned on, since
  // it is served on the service's own port and must be restricted by the network (docs/security.md).
  // Demo mode serves it anyway: demo mode listens on loopback only.
  OXYGEN_CHECKER_METRICS: 'off',
  // worker processes on one host sharing the port (node:cluster; src/cluster). 1: one process, no
  // primary. More: a primary that forks that many workers; one per core is the usual ceiling
  // (docs/deployment.md, "Several workers on one host").
  OXYGEN_CHECKER_WORKERS: 1,
} as const;

export interface FhirFallbackLimits {
  readonly callTimeoutMs: number;
  readonly budgetMs: number;
  readonly maxResponseBytes: number;
  readonly maxPages: number;
}

export interface AuthLimits {
  readonly clockSkewS: number;
  readonly maxTokenLifetimeS: number;
  readonly jwksTimeoutMs: number;
  readonly jwksMaxBytes: number;
  readonly jwksCacheTtlS: number;
  readonly jwksRefreshMinIntervalS: number;
  readonly replayCacheMaxEntries: number;
  /** Live token ids one client may hold in the store's replay cache (its share). */
  readonly replayMaxPerClient: number;
}

/** How long the HTTP server waits on a client (src/http/connection-timeouts.ts). */
export interface ConnectionTimeouts {
  readonly requestTimeoutMs: number;
  readonly headersTimeoutMs: number;
  readonly keepAliveTimeoutMs: number;
  readonly socketIdleTimeoutMs: number;
}

/** Where the service keeps its memory, and how long (src/store). */
export interface StoreConfig {
  /** The data directory, absolute: the database and, unless configured, the patient-key secret. */
  readonly dataDir: string;
  /** The patient pseudonym secret file, absolute, when configured; else it lives in `dataDir`. */
  readonly patientKeyFile: string | undefined;
  readonly auditRetentionDays: number;
  readonly purgeIntervalMin: number;
  /** `DATABASE_URL` when set: the shared PostgreSQL store instead of SQLite in `dataDir`. */
  readonly databaseUrl?: string;
}

/** Per-client limits on feedback (docs/api.md, "Feedback"). */
export interface FeedbackConfig {
  readonly maxItemsPerRequest: number;
  readonly maxRecordsPerClientPerDay: number;
}

/** Production needs both a trust file and the public base URL that token audiences name. */
export type SecurityConfig =
  | { readonly mode: 'demo' }
  | {
      readonly mode: 'production';
      /** The trust file (`OXYGEN_CHECKER_TRUST`), absolute. */
      readonly trustPath: string;
      /** `OXYGEN_CHECKER_PUBLIC_URL`, normalised: https, no trailing slash. */
      readonly publicUrl: string;
      readonly limits: AuthLimits;
    };

export interface EnvConfig {
  readonly host: string;
  readonly port: number;
  readonly policyPath: string;
  readonly cardsDir: string;
  /** Reload the policy when its file or the cards folder changes, as well as on SIGHUP. */
  readonly policyWatch: boolean;
  readonly logLevel: LogLevel;
  readonly bodyLimitBytes: number;
  /** `'*'` (any origin, no credentials) or an explicit allowlist of origins. */
  readonly corsOrigins: '*' | readonly string[];
  readonly fhir: FhirFallbackLimits;
  readonly maxConcurrentEvaluations: number;
  /** Hook calls one client may have evaluated at once (src/http/client-key.ts says who a client is). */
  readonly maxConcurrentPerClient: number;
  /** Event-loop delay past which new hook calls are refused (src/http/loop-delay.ts). */
  readonly maxLoopDelayMs: number;
  /** Time a hook call may have waited before evaluation, past which it is refused (src/http/overload.ts). */
  readonly maxWaitMs: number;
  readonly shutdownGraceMs: number;
  readonly timeouts: ConnectionTimeouts;
  /** Clients reach the service over HTTPS only (TLS here or at a proxy), so HSTS is sent. */
  readonly behindTls: boolean;
  readonly security: SecurityConfig;
  readonly store: StoreConfig;
  readonly feedback: FeedbackConfig;
  /** GET /metrics is served: `OXYGEN_CHECKER_METRICS=on`, or demo mode (loopback only). */
  readonly metrics?: boolean;
  /** Worker processes sharing the port (src/cluster); 1, or absent, is one process with no primary. */
  readonly workers?: number;
}

export interface EnvProblem {
  /** The environment variable at fault, e.g. `PORT`. */
  readonly variable: string;
  readonly message: string;
}

export type EnvConfigParse =
  | { readonly kind: 'ok'; readonly config: EnvConfig }
  | { readonly kind: 'invalid'; readonly problems: readonly EnvProblem[] };

/**
 * What each variable's parser accepts and defaults to, attached to it with zod's `.meta()` so the
 * configuration reference (src/config/config-reference.ts) is generated from the parser itself.
 */
export type VariableMeta =
  | { readonly kind: 'integer'; readonly default: number; readonly min: number; readonly max: number }
  | { readonly kind: 'boolean'; readonly default: boolean }
  | { readonly kind: 'text'; readonly default: string };

/** An unset or empty variable takes its default; anything else must parse as a whole integer. */
function integerVar(fallback: number, min: number, max: number) {
  return z
    .string()
    .optional()
    .transform((text, ctx) => {
      if (text === undefined || text.trim() === '') {
        return fallback;
      }
      if (!/^\d+$/.test(text.trim())) {
        ctx.addIssue({ code: 'custom', message: `must be a whole number from ${min} to ${max}` });
        return z.NEVER;
      }
      const value = Number(text.trim());
      if (value < min || value > max) {
        ctx.addIssue({ code: 'custom', message: `must be a whole number from ${min} to ${max}` });
        return z.NEVER;
      }
      return value;
    })
    .meta({ kind: 'integer', default: fallback, min, max } satisfies VariableMeta);
}

/** An unset or empty variable takes its default; otherwise `true` or `false`. */
function booleanVar(fallback: boolean) {
  return z
    .string()
    .optional()
    .transform((text, ctx) => {
      const value = text?.trim().toLowerCase() ?? '';
      if (value === '') {
        return fallback;
      }
      if (value !== 'true' && value !== 'false') {
        ctx.addIssue({ code: 'custom', message: 'must be true or false' });
        return z.NEVER;
      }
      return value === 'true';
    })
    .meta({ kind: 'boolean', default: fallback } satisfies VariableMeta);
}

function textVar(fallback: string) {
  return z
    .string()
    .optional()
    .transform((text) => (text === undefined || text.trim() === '' ? fallback : text.trim()))
    .meta({ kind: 'text', default: fallback } satisfies VariableMeta);
}

function parseOrigins(text: string, ctx: z.RefinementCtx): '*' | readonly string[] {
  if (text === '*') {
    return '*';
  }
  const origins = text.split(',').map((item) => item.trim()).filter((item) => item !== '');
  for (const origin of origins) {
    let parsed: URL | undefined;
    try {
      parsed = new URL(origin);
    } catch {
      parsed = undefined;
    }
    if (parsed === undefined || parsed.origin !== origin) {
      ctx.addIssue({
        code: 'custom',
        message: `'${origin}' is not an origin (scheme://host[:port], no path or trailing slash)`,
      });
    }
  }
  if (origins.length === 0) {
    ctx.addIssue({ code: 'custom', message: 'must be * or a comma-separated list of origins' });
  }
  return origins;
}

/** The parser of every variable env-config.ts reads; config-reference.ts documents it. */
export const EnvSchema = z.object({
  HOST: textVar(ENV_DEFAULTS.HOST),
  PORT: integerVar(ENV_DEFAULTS.PORT, 0, 65_535),
  // Empty means unset: demo mode takes the bundled policy, production refuses (policyProblems).
  OXYGEN_CHECKER_POLICY: textVar(''),
  OXYGEN_CHECKER_CARDS_DIR: textVar(ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR),
  OXYGEN_CHECKER_POLICY_WATCH: booleanVar(ENV_DEFAULTS.OXYGEN_CHECKER_POLICY_WATCH),
  LOG_LEVEL: textVar(ENV_DEFAULTS.LOG_LEVEL).pipe(
    z.enum(LOG_LEVELS, { error: `must be one of ${LOG_LEVELS.join(', ')}` }),
  ),
  OXYGEN_CHECKER_BODY_LIMIT_BYTES: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_BODY_LIMIT_BYTES, 1024, 104_857_600),
  OXYGEN_CHECKER_CORS_ORIGINS: textVar(ENV_DEFAULTS.OXYGEN_CHECKER_CORS_ORIGINS).transform(parseOrigins),
  OXYGEN_CHECKER_FHIR_CALL_TIMEOUT_MS: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_FHIR_CALL_TIMEOUT_MS, 1, 60_000),
  OXYGEN_CHECKER_FHIR_BUDGET_MS: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_FHIR_BUDGET_MS, 1, 120_000),
  OXYGEN_CHECKER_FHIR_MAX_RESPONSE_BYTES: integerVar(
    ENV_DEFAULTS.OXYGEN_CHECKER_FHIR_MAX_RESPONSE_BYTES,
    1024,
    104_857_600,
  ),
  OXYGEN_CHECKER_FHIR_MAX_PAGES: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_FHIR_MAX_PAGES, 1, 100),
  OXYGEN_CHECKER_MAX_CONCURRENT: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_MAX_CONCURRENT, 1, 10_000),
  OXYGEN_CHECKER_SHUTDOWN_GRACE_MS: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_SHUTDOWN_GRACE_MS, 0, 600_000),
  OXYGEN_CHECKER_REQUEST_TIMEOUT_MS: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_REQUEST_TIMEOUT_MS, 100, 300_000),
  OXYGEN_CHECKER_HEADERS_TIMEOUT_MS: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_HEADERS_TIMEOUT_MS, 100, 300_000),
  OXYGEN_CHECKER_KEEP_ALIVE_TIMEOUT_MS: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_KEEP_ALIVE_TIMEOUT_MS, 100, 600_000),
  OXYGEN_CHECKER_SOCKET_IDLE_TIMEOUT_MS: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_SOCKET_IDLE_TIMEOUT_MS, 100, 600_000),
  OXYGEN_CHECKER_BEHIND_TLS: booleanVar(ENV_DEFAULTS.OXYGEN_CHECKER_BEHIND_TLS),
  OXYGEN_CHECKER_MODE: textVar(ENV_DEFAULTS.OXYGEN_CHECKER_MODE).pipe(
    z.enum(MODES, { error: `must be one of ${MODES.join(', ')}` }),
  ),
  OXYGEN_CHECKER_TRUST: textVar(''),
  OXYGEN_CHECKER_PUBLIC_URL: textVar(''),
  OXYGEN_CHECKER_JWT_CLOCK_SKEW_S: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_JWT_CLOCK_SKEW_S, 0, 300),
  OXYGEN_CHECKER_JWT_MAX_LIFETIME_S: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_JWT_MAX_LIFETIME_S, 1, 86_400),
  OXYGEN_CHECKER_JWKS_TIMEOUT_MS: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_JWKS_TIMEOUT_MS, 1, 30_000),
  OXYGEN_CHECKER_JWKS_MAX_BYTES: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_JWKS_MAX_BYTES, 1024, 10_485_760),
  OXYGEN_CHECKER_JWKS_CACHE_TTL_S: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_JWKS_CACHE_TTL_S, 1, 86_400),
  OXYGEN_CHECKER_JWKS_REFRESH_MIN_INTERVAL_S: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_JWKS_REFRESH_MIN_INTERVAL_S, 1, 3600),
  OXYGEN_CHECKER_REPLAY_CACHE_MAX_ENTRIES: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_REPLAY_CACHE_MAX_ENTRIES, 1000, 10_000_000),
  OXYGEN_CHECKER_DATA_DIR: textVar(ENV_DEFAULTS.OXYGEN_CHECKER_DATA_DIR),
  OXYGEN_CHECKER_AUDIT_RETENTION_DAYS: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_AUDIT_RETENTION_DAYS, 1, 36_500),
  OXYGEN_CHECKER_PURGE_INTERVAL_MIN: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_PURGE_INTERVAL_MIN, 1, 10_080),
  OXYGEN_CHECKER_PATIENT_KEY_FILE: textVar(''),
  OXYGEN_CHECKER_FEEDBACK_MAX_ITEMS: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_FEEDBACK_MAX_ITEMS, 1, 10_000),
  OXYGEN_CHECKER_FEEDBACK_MAX_PER_CLIENT_DAY: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_FEEDBACK_MAX_PER_CLIENT_DAY, 1, 10_000_000),
  OXYGEN_CHECKER_REPLAY_MAX_PER_CLIENT: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_REPLAY_MAX_PER_CLIENT, 100, 10_000_000),
  OXYGEN_CHECKER_MAX_CONCURRENT_PER_CLIENT: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_MAX_CONCURRENT_PER_CLIENT, 1, 10_000),
  OXYGEN_CHECKER_MAX_LOOP_DELAY_MS: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_MAX_LOOP_DELAY_MS, 10, 60_000),
  OXYGEN_CHECKER_MAX_WAIT_MS: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_MAX_WAIT_MS, 10, 60_000),
  DATABASE_URL: textVar(ENV_DEFAULTS.DATABASE_URL).refine(
    (url) => url === '' || /^postgres(ql)?:\/\/./i.test(url),
    // The value is not echoed: it may carry a password.
    { message: 'must be a postgres:// or postgresql:// URL (or empty for the embedded SQLite store)' },
  ),
  OXYGEN_CHECKER_METRICS: textVar(ENV_DEFAULTS.OXYGEN_CHECKER_METRICS).pipe(
    z.enum(METRICS_SETTINGS, { error: `must be one of ${METRICS_SETTINGS.join(', ')}` }),
  ),
  OXYGEN_CHECKER_WORKERS: integerVar(ENV_DEFAULTS.OXYGEN_CHECKER_WORKERS, 1, 64),
});

type ParsedEnv = z.infer<typeof EnvSchema>;

/**
 * Every variable with the service's prefix that it reads: those parsed here and the review pages'
 * (review-config.ts). A test checks that every such name in src/ is on this list.
 */
export const KNOWN_VARIABLES: readonly string[] = Object.freeze(
  [...Object.keys(EnvSchema.shape).filter((name) => name.startsWith(CONFIG_PREFIX)), ...REVIEW_VARIABLES].sort(),
);

const SECURITY_DOC = 'see docs/security.md';

/**
 * A production service advises on real orders, so it runs the policy its site chose, never the demo's
 * by default. Read from the raw environment, so it is listed beside any other problem.
 */
function policyProblems(env: Readonly<Record<string, string | undefined>>): EnvProblem[] {
  const production = (env['OXYGEN_CHECKER_MODE'] ?? '').trim() === 'production';
  if (!production || (env['OXYGEN_CHECKER_POLICY'] ?? '').trim() !== '') {
    return [];
  }
  return [
    {
      variable: 'OXYGEN_CHECKER_POLICY',
      message:
        'production mode needs the local policy file set explicitly; the bundled demo policy is not used in production (see docs/policy.md)',
    },
  ];
}

/** Demo mode must stay on loopback; production must have what token checks need. */
function securityProblems(v: ParsedEnv): EnvProblem[] {
  const problems: EnvProblem[] = [];
  if (v.OXYGEN_CHECKER_MODE === 'demo') {
    if (!isLoopbackHost(v.HOST)) {
      problems.push({
        variable: 'HOST',
        message:
          'demo mode has authentication off, so it binds to loopback only (127.0.0.1, ::1 or localhost); ' +
          `to serve other machines set OXYGEN_CHECKER_MODE=production with OXYGEN_CHECKER_TRUST and OXYGEN_CHECKER_PUBLIC_URL (${SECURITY_DOC})`,
      });
    }
    // Half a production set-up would run with authentication off behind whatever proxy was meant for it.
    for (const variable of ['OXYGEN_CHECKER_TRUST', 'OXYGEN_CHECKER_PUBLIC_URL'] as const) {
      if (v[variable] !== '') {
        problems.push({
          variable,
          message: 'is set, but OXYGEN_CHECKER_MODE is not production, so authentication would be off; set OXYGEN_CHECKER_MODE=production',
        });
      }
    }
    return problems;
  }
  if (v.OXYGEN_CHECKER_TRUST === '') {
    problems.push({
      variable: 'OXYGEN_CHECKER_TRUST',
      message: `production mode needs the trust file naming the CDS clients allowed to call (${SECURITY_DOC})`,
    });
  }
  if (v.OXYGEN_CHECKER_PUBLIC_URL === '') {
    problems.push({
      variable: 'OXYGEN_CHECKER_PUBLIC_URL',
      message: `production mode needs the https base URL clients call, e.g. https://cds.example.org (${SECURITY_DOC})`,
    });
  } else {
    const parsed = parsePublicBaseUrl(v.OXYGEN_CHECKER_PUBLIC_URL, { requireHttps: true });
    if (parsed.kind === 'invalid') {
      problems.push({ variable: 'OXYGEN_CHECKER_PUBLIC_URL', message: parsed.message });
    }
  }
  return problems;
}

function securityConfig(v: ParsedEnv, absolute: (path: string) => string): SecurityConfig {
  if (v.OXYGEN_CHECKER_MODE === 'demo') {
    return { mode: 'demo' };
  }
  const parsed = parsePublicBaseUrl(v.OXYGEN_CHECKER_PUBLIC_URL, { requireHttps: true });
  return {
    mode: 'production',
    trustPath: absolute(v.OXYGEN_CHECKER_TRUST),
    publicUrl: parsed.kind === 'ok' ? parsed.base : '',
    limits: {
      clockSkewS: v.OXYGEN_CHECKER_JWT_CLOCK_SKEW_S,
      maxTokenLifetimeS: v.OXYGEN_CHECKER_JWT_MAX_LIFETIME_S,
      jwksTimeoutMs: v.OXYGEN_CHECKER_JWKS_TIMEOUT_MS,
      jwksMaxBytes: v.OXYGEN_CHECKER_JWKS_MAX_BYTES,
      jwksCacheTtlS: v.OXYGEN_CHECKER_JWKS_CACHE_TTL_S,
      jwksRefreshMinIntervalS: v.OXYGEN_CHECKER_JWKS_REFRESH_MIN_INTERVAL_S,
      replayCacheMaxEntries: v.OXYGEN_CHECKER_REPLAY_CACHE_MAX_ENTRIES,
      replayMaxPerClient: v.OXYGEN_CHECKER_REPLAY_MAX_PER_CLIENT,
    },
  };
}

function deepFreeze<T>(value: T): T {
  if (value !== null && typeof value === 'object') {
    for (const inner of Object.values(value)) {
      deepFreeze(inner);
    }
    Object.freeze(value);
  }
  return value;
}

/**
 * Parses the environment into a frozen `EnvConfig`. Pure: the caller passes `process.env` and the
 * directory that relative file paths are resolved against (normally `process.cwd()`).
 */
export function parseEnvConfig(
  env: Readonly<Record<string, string | undefined>>,
  cwd: string,
): EnvConfigParse {
  // Listed with every other problem, so one start-up shows all that is wrong.
  const policy = policyProblems(env);
  const unknown = [
    ...unknownVariables(env, KNOWN_VARIABLES, CONFIG_PREFIX),
    ...renamedVariables(env, KNOWN_VARIABLES, RETIRED_PREFIX, CONFIG_PREFIX),
  ];
  const parsed = EnvSchema.safeParse(env);
  if (!parsed.success) {
    return {
      kind: 'invalid',
      problems: [
        ...parsed.error.issues.map((issue) => ({
          variable: issue.path.map(String).join('.') || '(environment)',
          message: issue.message,
        })),
        ...policy,
        ...unknown,
      ],
    };
  }
  const v = parsed.data;
  const problems: EnvProblem[] = [];
  if (v.OXYGEN_CHECKER_FHIR_BUDGET_MS < v.OXYGEN_CHECKER_FHIR_CALL_TIMEOUT_MS) {
    problems.push({
      variable: 'OXYGEN_CHECKER_FHIR_BUDGET_MS',
      message: 'must not be below OXYGEN_CHECKER_FHIR_CALL_TIMEOUT_MS',
    });
  }
  // Node refuses a headers timeout longer than the request timeout (node/lib/_http_server.js).
  if (v.OXYGEN_CHECKER_HEADERS_TIMEOUT_MS > v.OXYGEN_CHECKER_REQUEST_TIMEOUT_MS) {
    problems.push({
      variable: 'OXYGEN_CHECKER_HEADERS_TIMEOUT_MS',
      message: 'must not be above OXYGEN_CHECKER_REQUEST_TIMEOUT_MS',
    });
  }
  problems.push(...policy, ...securityProblems(v), ...unknown);
  if (problems.length > 0) {
    return { kind: 'invalid', problems };
  }
  const absolute = (path: string): string => (isAbsolute(path) ? path : resolve(cwd, path));
  return {
    kind: 'ok',
    config: deepFreeze({
      host: v.HOST,
      port: v.PORT,
      policyPath: v.OXYGEN_CHECKER_POLICY === '' ? ENV_DEFAULTS.OXYGEN_CHECKER_POLICY : absolute(v.OXYGEN_CHECKER_POLICY),
      cardsDir: absolute(v.OXYGEN_CHECKER_CARDS_DIR),
      policyWatch: v.OXYGEN_CHECKER_POLICY_WATCH,
      logLevel: v.LOG_LEVEL,
      bodyLimitBytes: v.OXYGEN_CHECKER_BODY_LIMIT_BYTES,
      corsOrigins: v.OXYGEN_CHECKER_CORS_ORIGINS,
      fhir: {
        callTimeoutMs: v.OXYGEN_CHECKER_FHIR_CALL_TIMEOUT_MS,
        budgetMs: v.OXYGEN_CHECKER_FHIR_BUDGET_MS,
        maxResponseBytes: v.OXYGEN_CHECKER_FHIR_MAX_RESPONSE_BYTES,
        maxPages: v.OXYGEN_CHECKER_FHIR_MAX_PAGES,
      },
      maxConcurrentEvaluations: v.OXYGEN_CHECKER_MAX_CONCURRENT,
      maxConcurrentPerClient: Math.min(v.OXYGEN_CHECKER_MAX_CONCURRENT_PER_CLIENT, v.OXYGEN_CHECKER_MAX_CONCURRENT),
      maxLoopDelayMs: v.OXYGEN_CHECKER_MAX_LOOP_DELAY_MS,
      maxWaitMs: v.OXYGEN_CHECKER_MAX_WAIT_MS,
      shutdownGraceMs: v.OXYGEN_CHECKER_SHUTDOWN_GRACE_MS,
      timeouts: {
        requestTimeoutMs: v.OXYGEN_CHECKER_REQUEST_TIMEOUT_MS,
        headersTimeoutMs: v.OXYGEN_CHECKER_HEADERS_TIMEOUT_MS,
        keepAliveTimeoutMs: v.OXYGEN_CHECKER_KEEP_ALIVE_TIMEOUT_MS,
        socketIdleTimeoutMs: v.OXYGEN_CHECKER_SOCKET_IDLE_TIMEOUT_MS,
      },
      // Production requires an https public URL, so clients reach it over TLS: always send HSTS there.
      behindTls: v.OXYGEN_CHECKER_BEHIND_TLS || v.OXYGEN_CHECKER_MODE === 'production',
      security: securityConfig(v, absolute),
      store: {
        dataDir: absolute(v.OXYGEN_CHECKER_DATA_DIR),
        patientKeyFile: v.OXYGEN_CHECKER_PATIENT_KEY_FILE === '' ? undefined : absolute(v.OXYGEN_CHECKER_PATIENT_KEY_FILE),
        auditRetentionDays: v.OXYGEN_CHECKER_AUDIT_RETENTION_DAYS,
        purgeIntervalMin: v.OXYGEN_CHECKER_PURGE_INTERVAL_MIN,
        ...(v.DATABASE_URL === '' ? {} : { databaseUrl: v.DATABASE_URL }),
      },
      feedback: {
        maxItemsPerRequest: v.OXYGEN_CHECKER_FEEDBACK_MAX_ITEMS,
        maxRecordsPerClientPerDay: v.OXYGEN_CHECKER_FEEDBACK_MAX_PER_CLIENT_DAY,
      },
      metrics: v.OXYGEN_CHECKER_METRICS === 'on' || v.OXYGEN_CHECKER_MODE === 'demo',
      workers: v.OXYGEN_CHECKER_WORKERS,
    }),
  };
}

/** One line per problem, in the same `where: what` shape as policy problems. */
export function formatEnvProblems(problems: readonly EnvProblem[]): string {
  return problems.map((p) => `${p.variable}: ${p.message}`).join('\n');
}
