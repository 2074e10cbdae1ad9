import type { RequestHandler, Response } from 'express';
import { ENV_DEFAULTS, type EnvConfig } from '../config/env-config.js';
import { clientKeyOf } from './client-key.js';
import { AppError, type ErrorCode } from './errors.js';
import { sharedLoopDelayMs } from './loop-delay.js';
import { requestState } from './request-context.js';

/**
 * Who may start an evaluation. A hook call is refused at once, before any work, with `Retry-After`
 * (RFC 9110 §10.2.3) rather than queued: an EHR waits on a hook call synchronously, and a queue that
 * grows under load only turns every answer late, where a quick refusal lets the client show the order
 * without advice and try again (CDS Hooks 2.0: advice never blocks). Three tests, in this order:
 *
 * 1. `shed`, mounted before authentication and the body are read, so a refusal costs as little as it
 *    can: work is waiting too long (503), the event loop running more than `maxLoopDelayMs` late
 *    (loop-delay.ts says why the loop's delay, not a count, is the measure). Counting open calls
 *    cannot see this: under 300 concurrent callers few calls are open at any instant, yet each one
 *    waited its turn behind all the others before Node even read it. While no call is being
 *    evaluated the call is let through whatever the delay, so the service always makes progress
 *    (the delay may be another process's, or a pause of the collector, not a queue of ours).
 * 2. `admit`, once the client is known: the client holds its whole share (429, RFC 6585 §4): at most
 *    `maxConcurrentPerClient` of its calls are evaluated at once, so a client whose calls hang on its
 *    FHIR server, or whose sockets do not read, holds its own slots and no one else's.
 * 3. `admit`: every slot is taken (503): at most `maxConcurrent` calls are evaluated at once. This
 *    is what bounds calls waiting on I/O (the store's commit, FHIR servers), which the loop's delay
 *    does not show.
 *
 * A slot is held for the evaluation only: it is given back when the answer is handed to the socket
 * (`res.end`), or when the connection drops first. Not on `finish` or `close`: both wait until the
 * answer's last byte is in the kernel, which never happens for a client that does not read once its
 * socket buffers are full, and the slot would stay pinned until the socket idle timeout cut it.
 */

/** Seconds a refused client is asked to wait: hook calls take well under a second (cds-hooks.md §3.4). */
export const RETRY_AFTER_SECONDS = 1;

export interface GateLimits {
  /** Calls evaluated at once, all clients together. */
  readonly maxConcurrent: number;
  /** Calls one client may have evaluated at once (client-key.ts says who a client is). */
  readonly maxConcurrentPerClient: number;
  /** Milliseconds of event-loop delay past which new calls are refused. */
  readonly maxLoopDelayMs: number;
}

export interface GateDeps {
  /** Defaults to the process's loop delay gauge; tests of the decisions pass their own. */
  readonly loopDelayMs?: () => number;
  /** Told each refusal's reason (the metrics, src/http/metrics.ts). */
  readonly onRefused?: (reason: 'loop-delay' | 'shared-cap' | 'client-share') => void;
}

export interface EvaluationGate {
  /** Refuses the call while work waits too long; mounted on the hook route before authentication. */
  readonly shed: RequestHandler;
  /** Admits the call or throws the refusal; the slot is given back as described above. */
  readonly admit: RequestHandler;
  /** Calls admitted and not yet answered. */
  readonly inFlight: () => number;
}

type GateSettings = Pick<EnvConfig, 'maxConcurrentEvaluations' | 'maxConcurrentPerClient' | 'maxLoopDelayMs'>;

/** The limits from the app's settings; a setting a test leaves out takes its ENV_DEFAULTS value. */
export function gateLimitsFrom(config: Partial<GateSettings>): GateLimits {
  return {
    maxConcurrent: config.maxConcurrentEvaluations ?? ENV_DEFAULTS.OXYGEN_CHECKER_MAX_CONCURRENT,
    maxConcurrentPerClient: config.maxConcurrentPerClient ?? ENV_DEFAULTS.OXYGEN_CHECKER_MAX_CONCURRENT_PER_CLIENT,
    maxLoopDelayMs: config.maxLoopDelayMs ?? ENV_DEFAULTS.OXYGEN_CHECKER_MAX_LOOP_DELAY_MS,
  };
}

export function createEvaluationGate(limits: GateLimits, deps: GateDeps = {}): EvaluationGate {
  const loopDelayMs = deps.loopDelayMs ?? sharedLoopDelayMs;
  let inFlight = 0;
  const perClient = new Map<string, number>();

  const refuse = (res: Response, code: ErrorCode, reason: 'loop-delay' | 'shared-cap' | 'client-share'): never => {
    deps.onRefused?.(reason);
    // The refusal's summary line names the route it refused, as the handler would have.
    requestState(res).route = 'service';
    res.setHeader('Retry-After', String(RETRY_AFTER_SECONDS));
    throw new AppError(code);
  };

  const shed: RequestHandler = (_req, res, next) => {
    if (inFlight > 0 && loopDelayMs() > limits.maxLoopDelayMs) {
      refuse(res, 'CDS_ERR_OVERLOADED', 'loop-delay');
    }
    next();
  };

  const refusal = (client: string): ErrorCode | undefined => {
    if ((perClient.get(client) ?? 0) >= limits.maxConcurrentPerClient) {
      return 'CDS_ERR_CLIENT_BUSY';
    }
    return inFlight >= limits.maxConcurrent ? 'CDS_ERR_OVERLOADED' : undefined;
  };

  const admit: RequestHandler = (req, res, next) => {
    const client = clientKeyOf(req, res);
    const code = refusal(client);
    if (code !== undefined) {
      refuse(res, code, code === 'CDS_ERR_CLIENT_BUSY' ? 'client-share' : 'shared-cap');
    }
    inFlight += 1;
    perClient.set(client, (perClient.get(client) ?? 0) + 1);
    let released = false;
    const release = (): void => {
      if (released) {
        return;
      }
      released = true;
      inFlight -= 1;
      const held = (perClient.get(client) ?? 1) - 1;
      // Emptied entries are dropped, so the map holds only clients with calls in flight.
      if (held === 0) {
        perClient.delete(client);
      } else {
        perClient.set(client, held);
      }
    };
    releaseOnEnd(res, release);
    // A connection that drops before the answer is ready.
    res.once('close', release);
    next();
  };
  return { shed, admit, inFlight: () => inFlight };
}

/** Calls `release` as the answer is handed over, whether or not the socket can take it yet. */
function releaseOnEnd(res: Response, release: () => void): void {
  const end = res.end.bind(res) as (...args: unknown[]) => Response;
  res.end = ((...args: unknown[]): Response => {
    release();
    return end(...args);
  }) as Response['end'];
}
