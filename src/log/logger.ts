import { pino, type DestinationStream, type Logger } from 'pino';
import type { LogLevel } from '../config/env-config.js';
import { capList, capOptional, capText } from './cap-text.js';
import { compileRedaction } from './redact-fields.js';
import type { RefusalLimiter } from './refusal-limiter.js';

export type { Logger } from 'pino';

/**
 * Paths pino blanks before a line is written. The summary lines below are built from an allowlist
 * and never carry these, so this is the second line of defence: for a request object or an error's
 * context logged by mistake. Bearer tokens (CDS Hooks 2.0 §Security: never log the token), cookies,
 * and the patient identifiers a hook context or prefetch carries.
 */
export const REDACT_PATHS: readonly string[] = [
  'req.headers.authorization',
  'req.headers.cookie',
  'res.headers["set-cookie"]',
  'headers.authorization',
  'headers.cookie',
  'authorization',
  'fhirAuthorization',
  '*.fhirAuthorization',
  '*.*.fhirAuthorization',
  'access_token',
  '*.access_token',
  '*.*.access_token',
  'patientId',
  '*.patientId',
  '*.*.patientId',
  'prefetch',
  '*.prefetch',
  'context',
  '*.context',
  'req.body',
  // A FHIR resource logged by mistake: its id (a Patient's id is the patient id), the patient's
  // names, identifiers (record numbers), birth date, and the references that name the patient.
  'id',
  '*.id',
  '*.*.id',
  'name',
  '*.name',
  '*.*.name',
  'identifier',
  '*.identifier',
  '*.*.identifier',
  'birthDate',
  '*.birthDate',
  '*.*.birthDate',
  'subject',
  '*.subject',
  '*.*.subject',
];

export interface LoggerOptions {
  readonly level: LogLevel;
  /** Where lines go; stdout when omitted. Tests pass a memory stream. */
  readonly destination?: DestinationStream;
}

/** Compiled once: pino's own `redact` by wildcard paths cost ~45 µs a line (see redact-fields.ts). */
const redactLine = compileRedaction(REDACT_PATHS, '[Redacted]');

export function createLogger(options: LoggerOptions): Logger {
  const settings = {
    level: options.level,
    base: { service: 'oxygen-order-checker' },
    formatters: { log: (line: Record<string, unknown>) => redactLine(line) },
  };
  return options.destination === undefined ? pino(settings) : pino(settings, options.destination);
}

/** What the FHIR fallback did for one hook call: key names and failure kinds only, never URLs. */
export interface FallbackSummary {
  readonly used: boolean;
  readonly keysFetched: readonly string[];
  readonly keysFailed: readonly string[];
  /** Keys whose search had more pages than could be followed; the pages had were used. */
  readonly keysIncomplete: readonly string[];
}

/** The decision-level facts of one hook call: no identifiers, tokens or clinical values. */
export interface HookCallSummary {
  readonly kind: 'hook-call';
  readonly serviceId: string;
  readonly hook: string;
  readonly hookInstance: string;
  readonly ruleIds: readonly string[];
  readonly policyId: string;
  readonly policyVersion: string;
  /** sha256 (hex) of the policy file's bytes: an edited file that kept its id and version is told apart. */
  readonly policyContentHash: string;
  readonly cardCount: number;
  readonly fhirFallback: FallbackSummary;
  /** Optional prefetch keys that could not be had; the call went on without them. */
  readonly missingKeys: readonly string[];
  /** Template or policy slips found while building cards (src/cds promises no patient data). */
  readonly cardProblems: readonly string[];
  /** Required keys that could not be had (the call answered 412). */
  readonly unavailableKeys: readonly string[];
  /** The request named a fhirServer this client may not use, so it was not called (and why). */
  readonly fhirServerRefused?: string;
}

/**
 * One feedback item as logged: which card (and its rule, from the advisory on record), the outcome
 * and the override reason code. The route passes a card uuid or reason code only when it is one this
 * service issued or offered, never other text the caller chose; comments are never logged.
 */
export interface FeedbackItemSummary {
  readonly cardUuid: string;
  readonly ruleId: string | undefined;
  readonly knownCard: boolean;
  readonly outcome: string;
  readonly overrideReasonCode: string | undefined;
  readonly duplicate: boolean;
}

export interface FeedbackSummary {
  readonly kind: 'feedback';
  readonly serviceId: string;
  /** The authenticated client's issuer (from the trust file, or the demo's own). */
  readonly clientIss: string;
  /** sha256 (hex) of the policy file's bytes the service was running on when the feedback came. */
  readonly policyContentHash: string;
  readonly items: readonly FeedbackItemSummary[];
}

/** Why authentication refused a call: a reason code and the token's identifiers, never the token. */
export interface AuthRefusedSummary {
  readonly kind: 'auth-refused';
  readonly reason: string;
  readonly iss?: string;
  readonly kid?: string;
  readonly jti?: string;
  readonly tenant?: string;
}

/**
 * Who opened a review page and how: the reviewer id the proxy asserted (staff ids, never patient
 * data), `link` for a card's signed link (the token itself is never logged), or `demo`; or why access
 * was refused.
 */
export interface ReviewAccessSummary {
  readonly kind: 'review';
  readonly via?: string;
  readonly reviewer?: string;
  readonly refused?: string;
}

export type RequestDetail = HookCallSummary | FeedbackSummary | AuthRefusedSummary | ReviewAccessSummary;

/**
 * A hook call the overload gate refused (src/http/overload.ts): its reason word (`loop-delay`,
 * `waited`, `shared-cap`, `client-share`, as in the metrics) and, once the call had reached admission,
 * how long it had waited.
 */
export interface OverloadRefusal {
  readonly reason: string;
  readonly waitedMs?: number;
}

export interface RequestSummary {
  readonly requestId: string;
  readonly method: string;
  /** The route's name (`discovery`, `service`, ...), never the raw URL, which a caller controls. */
  readonly route: string;
  readonly status: number;
  readonly durationMs: number;
  readonly errorCode: string | undefined;
  readonly detail: RequestDetail | undefined;
  readonly overload?: OverloadRefusal;
}

/**
 * Copies only the named fields, so an object with extra properties (a whole request, say) cannot
 * smuggle them into the line; text the caller chose is capped (cap-text.ts).
 */
function pickDetail(detail: RequestDetail): Record<string, unknown> {
  if (detail.kind === 'hook-call') {
    return {
      serviceId: capText(detail.serviceId),
      hook: capText(detail.hook),
      hookInstance: capText(detail.hookInstance),
      ruleIds: [...detail.ruleIds],
      policyId: detail.policyId,
      policyVersion: detail.policyVersion,
      policyContentHash: detail.policyContentHash,
      cardCount: detail.cardCount,
      fhirFallback: {
        used: detail.fhirFallback.used,
        keysFetched: [...detail.fhirFallback.keysFetched],
        keysFailed: [...detail.fhirFallback.keysFailed],
        keysIncomplete: [...detail.fhirFallback.keysIncomplete],
      },
      missingKeys: [...detail.missingKeys],
      ...(detail.cardProblems.length === 0 ? {} : { cardProblems: capList(detail.cardProblems) }),
      ...(detail.unavailableKeys.length === 0 ? {} : { unavailableKeys: [...detail.unavailableKeys] }),
      ...(detail.fhirServerRefused === undefined ? {} : { fhirServerRefused: capText(detail.fhirServerRefused) }),
    };
  }
  if (detail.kind === 'review') {
    const fields = { reviewVia: detail.via, reviewer: capOptional(detail.reviewer), reviewRefused: detail.refused };
    return Object.fromEntries(Object.entries(fields).filter(([, value]) => value !== undefined));
  }
  if (detail.kind === 'auth-refused') {
    // Read from a token the service refused: any text at all, so each is capped.
    const ids = {
      iss: capOptional(detail.iss),
      kid: capOptional(detail.kid),
      jti: capOptional(detail.jti),
      tenant: capOptional(detail.tenant),
    };
    return {
      authRefused: detail.reason,
      ...Object.fromEntries(Object.entries(ids).filter(([, value]) => value !== undefined)),
    };
  }
  return {
    serviceId: capText(detail.serviceId),
    clientIss: capText(detail.clientIss),
    policyContentHash: detail.policyContentHash,
    feedback: detail.items.map((item) => ({
      cardUuid: item.cardUuid,
      ...(item.ruleId === undefined ? {} : { ruleId: item.ruleId }),
      knownCard: item.knownCard,
      outcome: item.outcome,
      ...(item.overrideReasonCode === undefined ? {} : { overrideReasonCode: item.overrideReasonCode }),
      duplicate: item.duplicate,
    })),
  };
}

/** Where a refusal came from, for rate-limiting repeated ones in the log (refusal-limiter.ts). */
export interface RefusalSource {
  readonly limiter: RefusalLimiter;
  /** Who the refusal is counted against: the authenticated issuer, else the address (refusalClientKey). */
  readonly client: string;
  /** A monotonic time in milliseconds. */
  readonly nowMs: number;
}

/**
 * A refusal: a 4xx, or a call shed by the overload gate (503 `CDS_ERR_OVERLOADED`), which is the
 * service working as designed, not a fault, and comes in floods exactly when the service is busiest.
 */
export function isRefusal(status: number, errorCode: string | undefined): boolean {
  return (status >= 400 && status < 500) || (status === 503 && errorCode === OVERLOAD_CODE);
}

const OVERLOAD_CODE = 'CDS_ERR_OVERLOADED';

/**
 * Whether a refusal is written, after the one summary line of those not written since the client's
 * last window, when there were any. Anything else is always written.
 */
function refusalWritten(logger: Logger, status: number, reason: string, source: RefusalSource | undefined): boolean {
  if (source === undefined || !isRefusal(status, reason)) {
    return true;
  }
  const decision = source.limiter.decide(source.client, reason, source.nowMs);
  if (decision.kind === 'suppress') {
    return false;
  }
  if (decision.suppressedBefore > 0) {
    logger.warn(
      { client: capText(source.client), refusal: reason, refusalsNotLogged: decision.suppressedBefore },
      'repeated refusals from one client were not logged one by one',
    );
  }
  return true;
}

/** Writes the one summary line a request gets (unless it is one refusal too many; see above). */
export function logRequestSummary(logger: Logger, summary: RequestSummary, refusals?: RefusalSource): void {
  if (!refusalWritten(logger, summary.status, summary.errorCode ?? String(summary.status), refusals)) {
    return;
  }
  const level = summaryLevel(summary);
  // The line is built only when it is written: at LOG_LEVEL=warn an answered call writes none.
  if (!logger.isLevelEnabled(level)) {
    return;
  }
  const line: Record<string, unknown> = {
    requestId: summary.requestId,
    method: capText(summary.method),
    route: summary.route,
    status: summary.status,
    durationMs: Math.round(summary.durationMs * 10) / 10,
  };
  if (summary.errorCode !== undefined) {
    line['errorCode'] = summary.errorCode;
  }
  if (summary.detail !== undefined) {
    Object.assign(line, pickDetail(summary.detail));
  }
  if (summary.overload !== undefined) {
    line['overloadReason'] = summary.overload.reason;
    if (summary.overload.waitedMs !== undefined) {
      line['waitedMs'] = Math.round(summary.overload.waitedMs * 10) / 10;
    }
  }
  logger[level](line, summary.detail?.kind === 'hook-call' ? 'hook call' : 'request');
}

/** A 5xx is an error; a call that slipped (card problems, a refused server or token, review refused) a warning. */
function summaryLevel(summary: RequestSummary): 'error' | 'warn' | 'info' {
  const slipped =
    (summary.detail?.kind === 'hook-call' &&
      (summary.detail.cardProblems.length > 0 || summary.detail.fhirServerRefused !== undefined)) ||
    summary.detail?.kind === 'auth-refused' ||
    (summary.detail?.kind === 'review' && summary.detail.refused !== undefined);
  if (summary.status >= 500) {
    // Shedding load is the gate doing its job: a warning to watch (and a metric), not a fault to page on.
    return summary.errorCode === OVERLOAD_CODE ? 'warn' : 'error';
  }
  return slipped ? 'warn' : 'info';
}

/**
 * Logs an unexpected error without its message: a message may quote data it was handed. The type and
 * stack frames are enough to find the fault; the request id ties the line to the client's 500.
 */
export function logInternalError(logger: Logger, requestId: string, error: unknown): void {
  const type = error instanceof Error ? error.name : typeof error;
  const frames =
    error instanceof Error && typeof error.stack === 'string'
      ? error.stack
          .split('\n')
          .slice(1)
          .map((frame) => frame.trim())
          .filter((frame) => frame.startsWith('at '))
      : [];
  logger.error({ requestId, errorType: capText(type), frames: capList(frames) }, 'internal error');
}

/** A request Node's HTTP parser refused before the app saw it (src/http/client-error.ts). */
export interface ClientErrorLine {
  /** The catalogue code answered. */
  readonly code: string;
  /** Node's error code, never its message (which may quote the request). */
  readonly nodeCode: string;
  readonly answered: boolean;
}

/** One line per parser refusal, rate-limited per client and code like the other refusals. */
export function logClientError(logger: Logger, line: ClientErrorLine, source: RefusalSource): void {
  if (!refusalWritten(logger, 400, line.code, source)) {
    return;
  }
  logger.info(
    { client: capText(source.client), errorCode: line.code, nodeCode: capText(line.nodeCode), answered: line.answered },
    'request refused by the HTTP parser',
  );
}
