import type { RequestHandler, Response } from 'express';
import { ENV_DEFAULTS, type EnvConfig } from '../config/env-config.js';
import { clientKeyOf } from './client-key.js';
import { AppError } from './errors.js';
import { PROCESS_WAIT_CLOCK, requestState, type WaitClock } from './request-context.js';

/**
 * Who may start an evaluation. A hook call is refused at once, before any work, with `Retry-After`
 * (RFC 9110 §10.2.3) rather than queued: an EHR waits on a hook call synchronously, and a queue that
 * grows under load only turns every answer late, where a quick refusal lets the client show the order
 * without advice and try again (CDS Hooks 2.0: advice never blocks). Four tests, in this order:
 *
 * 1. `shed`, mounted before authentication and the body are read, so a refusal costs as little as it
 *    can: the event loop is running more than `maxLoopDelayMs` late (503; loop-delay.ts says why the
 *    loop's delay is the measure of the wait before Node reads a request). Counting open calls cannot
 *    see this: under 300 concurrent callers few calls are open at any instant, yet each one waited its
 *    turn behind all the others before Node even read it.
 * 2. `admit`, once the client is known and the body read: the call has waited more than `maxWaitMs`
 *    (503): the loop's delay when it arrived plus the time since. The wait before Node reads a request
 *    is not the only one: the token's signature is checked on libuv's thread pool
 *    (src/security/jws-signature.ts), whose queue grows under load while the loop keeps time, and a
 *    body may come slowly. A call that passed `shed` can still have waited past the budget by now,
 *    and only its own clock shows it.
 * 3. `admit`: the client holds its whole share (429, RFC 6585 §4): at most `maxConcurrentPerClient`
 *    of its calls are evaluated at once, so a client whose calls hang on its FHIR server, or whose
 *    sockets do not read, holds its own slots and no one else's.
 * 4. `admit`: every slot is taken (503): at most `maxConcurrent` calls are evaluated at once. This
 *    is what bounds calls waiting on I/O (the store's commit, FHIR servers), which neither the loop's
 *    delay nor a call's wait before admission shows.
 *
 * While no call is being evaluated, tests 1 and 2 let the call through however long it waited, so
 * the service always makes progress: the loop's delay may be another process's or a pause of the
 * collector, and a call's wait may be the thread pool held by something else (a slow DNS lookup), not
 * a queue of ours; refusing every call then would turn a slow service into a silent one.
 *
 * There is no test just before the answer: once a call is evaluated its cards are in the audit trail
 * (committed with its token id), and sending them costs no more than a refusal would, so refusing
 * then would only throw away advice already paid for and recorded as given.
 *
 * A slot is held for the evaluation only: it is given back when the answer is handed to the socket
 * (`res.end`), or when the connection drops first. Not on `finish` or `close`: both wait until the
 * answer's last byte is in the kernel, which never happens for a client that does not read once its
 * socket buffers are full, and the slot would stay pinned until the socket idle timeout cut it.
 */

/** Why a hook call was refused before evaluation: the label of the metrics and the summary line. */
export type OverloadReason = 'loop-delay' | 'waited' | 'shared-cap' | 'client-share';

/** Seconds a refused client is asked to wait: hook calls take well under a second (cds-hooks.md §3.4). */
export const RETRY_AFTER_SECONDS = 1;

export interface GateLimits {
  /** Calls evaluated at once, all clients together. */
  readonly maxConcurrent: number;
  /** Calls one client may have evaluated at once (client-key.ts says who a client is). */
  readonly maxConcurrentPerClient: number;
  /** Milliseconds of event-loop delay past which new calls are refused. */
  readonly maxLoopDelayMs: number;
  /** Milliseconds a call may have waited, from before Node read it to its admission, before it is refused. */
  readonly maxWaitMs: number;
}

export interface GateDeps {
  /**
   * Defaults to the process's clock and loop delay gauge; tests of the decisions pass their own. It
   * must be the clock the request context noted the call's arrival on (request-context.ts).
   */
  readonly clock?: WaitClock;
  /** Told each refusal's reason (the metrics, src/http/metrics.ts). */
  readonly onRefused?: (reason: OverloadReason) => void;
  /** Told how long each admitted call had waited, in milliseconds (the metrics). */
  readonly onAdmitted?: (waitedMs: number) => void;
}

export interface EvaluationGate {
  /** Refuses the call while work waits too long; mounted on the hook route before authentication. */
  readonly shed: RequestHandler;
  /** Admits the call or throws the refusal; the slot is given back as described above. */
  readonly admit: RequestHandler;
  /** Calls admitted and not yet answered. */
  readonly inFlight: () => number;
}

type GateSettings = Pick<EnvConfig, 'maxConcurrentEvaluations' | 'maxConcurrentPerClient' | 'maxLoopDelayMs' | 'maxWaitMs'>;

/** The limits from the app's settings; a setting a test leaves out takes its ENV_DEFAULTS value. */
export function gateLimitsFrom(config: Partial<GateSettings>): GateLimits {
  return {
    maxConcurrent: config.maxConcurrentEvaluations ?? ENV_DEFAULTS.OXYGEN_CHECKER_MAX_CONCURRENT,
    maxConcurrentPerClient: config.maxConcurrentPerClient ?? ENV_DEFAULTS.OXYGEN_CHECKER_MAX_CONCURRENT_PER_CLIENT,
    maxLoopDelayMs: config.maxLoopDelayMs ?? ENV_DEFAULTS.OXYGEN_CHECKER_MAX_LOOP_DELAY_MS,
    maxWaitMs: config.maxWaitMs ?? ENV_DEFAULTS.OXYGEN_CHECKER_MAX_WAIT_MS,
  };
}

export function createEvaluationGate(limits: GateLimits, deps: GateDeps = {}): EvaluationGate {
  const clock = deps.clock ?? PROCESS_WAIT_CLOCK;
  let inFlight = 0;
  const perClient = new Map<string, number>();

  const refuse = (res: Response, reason: OverloadReason, waitedMs?: number): never => {
    deps.onRefused?.(reason);
    const state = requestState(res);
    // The refusal's summary line names the route it refused, as the handler would have.
    state.route = 'service';
    state.overload = waitedMs === undefined ? { reason } : { reason, waitedMs };
    res.setHeader('Retry-After', String(RETRY_AFTER_SECONDS));
    throw new AppError(reason === 'client-share' ? 'CDS_ERR_CLIENT_BUSY' : 'CDS_ERR_OVERLOADED');
  };

  const shed: RequestHandler = (_req, res, next) => {
    if (inFlight > 0 && clock.loopDelayMs() > limits.maxLoopDelayMs) {
      refuse(res, 'loop-delay');
    }
    next();
  };

  const refusal = (client: string, waitedMs: number): OverloadReason | undefined => {
    if (inFlight > 0 && waitedMs > limits.maxWaitMs) {
      return 'waited';
    }
    if ((perClient.get(client) ?? 0) >= limits.maxConcurrentPerClient) {
      return 'client-share';
    }
    return inFlight >= limits.maxConcurrent ? 'shared-cap' : undefined;
  };

  const admit: RequestHandler = (req, res, next) => {
    const client = clientKeyOf(req, res);
    const arrived = requestState(res);
    const waitedMs = arrived.arrivalLoopDelayMs + (clock.now() - arrived.startedAt);
    const reason = refusal(client, waitedMs);
    if (reason !== undefined) {
      refuse(res, reason, waitedMs);
    }
    deps.onAdmitted?.(waitedMs);
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
