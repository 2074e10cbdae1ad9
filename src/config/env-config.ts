import { isAbsolute, resolve } from 'node:path';
import { z } from 'zod';
import { bundledPath } from './package-root.js';

/**
 * The service's settings, read once from the environment at start-up, checked in full (every problem
 * listed, not only the first), frozen, and passed to `createApp`. Nothing reads `process.env` later.
 */

export const LOG_LEVELS = ['fatal', 'error', 'warn', 'info', 'debug', 'trace', 'silent'] as const;
export type LogLevel = (typeof LOG_LEVELS)[number];

/** Defaults in one place, each with its unit. */
export const ENV_DEFAULTS = {
  HOST: '127.0.0.1', // loopback: the demo is not reachable from other machines unless asked
  PORT: 8080,
  O2CHECK_POLICY: bundledPath('policies', 'bts-2017.yaml'),
  O2CHECK_CARDS_DIR: bundledPath('cards'),
  LOG_LEVEL: 'info' as LogLevel,
  O2CHECK_BODY_LIMIT_BYTES: 1_048_576, // bytes (1 MiB); larger hook requests get 413
  // Allowed browser origins for CORS, comma-separated; `*` only suits the credential-free demo.
  O2CHECK_CORS_ORIGINS: '*',
  // CDS Hooks 2.0 §Providing FHIR Resources asks for answers "on the order of 500 ms"; the fallback
  // only runs when prefetch was not supplied, so these bound the slow path rather than the usual one.
  O2CHECK_FHIR_CALL_TIMEOUT_MS: 1500, // milliseconds per FHIR request
  O2CHECK_FHIR_BUDGET_MS: 2500, // milliseconds for all FHIR requests of one hook call together
  O2CHECK_FHIR_MAX_RESPONSE_BYTES: 2_097_152, // bytes (2 MiB) per FHIR response body
  O2CHECK_FHIR_MAX_PAGES: 5, // searchset pages followed per prefetch key, the first included
} as const;

export interface FhirFallbackLimits {
  readonly callTimeoutMs: number;
  readonly budgetMs: number;
  readonly maxResponseBytes: number;
  readonly maxPages: number;
}

export interface EnvConfig {
  readonly host: string;
  readonly port: number;
  readonly policyPath: string;
  readonly cardsDir: string;
  readonly logLevel: LogLevel;
  readonly bodyLimitBytes: number;
  /** `'*'` (any origin, no credentials) or an explicit allowlist of origins. */
  readonly corsOrigins: '*' | readonly string[];
  readonly fhir: FhirFallbackLimits;
}

export interface EnvProblem {
  /** The environment variable at fault, e.g. `PORT`. */
  readonly variable: string;
  readonly message: string;
}

export type EnvConfigParse =
  | { readonly kind: 'ok'; readonly config: EnvConfig }
  | { readonly kind: 'invalid'; readonly problems: readonly EnvProblem[] };

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
    });
}

function textVar(fallback: string) {
  return z
    .string()
    .optional()
    .transform((text) => (text === undefined || text.trim() === '' ? fallback : text.trim()));
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

const EnvSchema = z.object({
  HOST: textVar(ENV_DEFAULTS.HOST),
  PORT: integerVar(ENV_DEFAULTS.PORT, 0, 65_535),
  O2CHECK_POLICY: textVar(ENV_DEFAULTS.O2CHECK_POLICY),
  O2CHECK_CARDS_DIR: textVar(ENV_DEFAULTS.O2CHECK_CARDS_DIR),
  LOG_LEVEL: textVar(ENV_DEFAULTS.LOG_LEVEL).pipe(
    z.enum(LOG_LEVELS, { error: `must be one of ${LOG_LEVELS.join(', ')}` }),
  ),
  O2CHECK_BODY_LIMIT_BYTES: integerVar(ENV_DEFAULTS.O2CHECK_BODY_LIMIT_BYTES, 1024, 104_857_600),
  O2CHECK_CORS_ORIGINS: textVar(ENV_DEFAULTS.O2CHECK_CORS_ORIGINS).transform(parseOrigins),
  O2CHECK_FHIR_CALL_TIMEOUT_MS: integerVar(ENV_DEFAULTS.O2CHECK_FHIR_CALL_TIMEOUT_MS, 1, 60_000),
  O2CHECK_FHIR_BUDGET_MS: integerVar(ENV_DEFAULTS.O2CHECK_FHIR_BUDGET_MS, 1, 120_000),
  O2CHECK_FHIR_MAX_RESPONSE_BYTES: integerVar(
    ENV_DEFAULTS.O2CHECK_FHIR_MAX_RESPONSE_BYTES,
    1024,
    104_857_600,
  ),
  O2CHECK_FHIR_MAX_PAGES: integerVar(ENV_DEFAULTS.O2CHECK_FHIR_MAX_PAGES, 1, 100),
});

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
  const parsed = EnvSchema.safeParse(env);
  if (!parsed.success) {
    return {
      kind: 'invalid',
      problems: parsed.error.issues.map((issue) => ({
        variable: issue.path.map(String).join('.') || '(environment)',
        message: issue.message,
      })),
    };
  }
  const v = parsed.data;
  if (v.O2CHECK_FHIR_BUDGET_MS < v.O2CHECK_FHIR_CALL_TIMEOUT_MS) {
    return {
      kind: 'invalid',
      problems: [
        {
          variable: 'O2CHECK_FHIR_BUDGET_MS',
          message: 'must not be below O2CHECK_FHIR_CALL_TIMEOUT_MS',
        },
      ],
    };
  }
  const absolute = (path: string): string => (isAbsolute(path) ? path : resolve(cwd, path));
  return {
    kind: 'ok',
    config: deepFreeze({
      host: v.HOST,
      port: v.PORT,
      policyPath: absolute(v.O2CHECK_POLICY),
      cardsDir: absolute(v.O2CHECK_CARDS_DIR),
      logLevel: v.LOG_LEVEL,
      bodyLimitBytes: v.O2CHECK_BODY_LIMIT_BYTES,
      corsOrigins: v.O2CHECK_CORS_ORIGINS,
      fhir: {
        callTimeoutMs: v.O2CHECK_FHIR_CALL_TIMEOUT_MS,
        budgetMs: v.O2CHECK_FHIR_BUDGET_MS,
        maxResponseBytes: v.O2CHECK_FHIR_MAX_RESPONSE_BYTES,
        maxPages: v.O2CHECK_FHIR_MAX_PAGES,
      },
    }),
  };
}

/** One line per problem, in the same `where: what` shape as policy problems. */
export function formatEnvProblems(problems: readonly EnvProblem[]): string {
  return problems.map((p) => `${p.variable}: ${p.message}`).join('\n');
}
