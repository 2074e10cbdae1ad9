import { performance } from 'node:perf_hooks';
import type { Request, Response } from 'express';
import { isRefusal, logRequestSummary, type Logger, type OverloadRefusal, type RequestDetail } from '../log/logger.js';
import { createRefusalLimiter, DEFAULT_REFUSAL_LIMITS, refusalClientKey, type RefusalLimits } from '../log/refusal-limiter.js';
import { sharedLoopDelayMs } from './loop-delay.js';

/**
 * The clock a request's life is measured on: a monotonic time in milliseconds, and the event loop's
 * delay. Tests of the overload gate pass their own, so how long a call waited is the test's figure.
 */
export interface WaitClock {
  readonly now: () => number;
  readonly loopDelayMs: () => number;
}

export const PROCESS_WAIT_CLOCK: WaitClock = { now: () => performance.now(), loopDelayMs: sharedLoopDelayMs };

/** Per-request bookkeeping the summary line is written from. */
export interface RequestState {
  readonly requestId: string;
  /** When the app first saw the request, on the WaitClock. */
  readonly startedAt: number;
  /**
   * The event loop's delay when the app first saw the request: about how long its bytes had waited
   * for Node to read them (loop-delay.ts). With the time since `startedAt`, how long the call has
   * waited (overload.ts).
   */
  readonly arrivalLoopDelayMs: number;
  /** Why the overload gate refused the call and how long it had waited, for the summary line. */
  overload?: OverloadRefusal | undefined;
  route: string;
  errorCode: string | undefined;
  detail: RequestDetail | undefined;
  /** The issuer authentication let through, if it did (set by requireAuthentication). */
  authenticatedIss?: string | undefined;
  /** The CDS service a hook call named, once it is known to be one of ours (routes/cds-service.ts). */
  serviceId?: string | undefined;
}

const STATE_KEY = 'oxygenCheckerRequest';

export function requestState(res: Response): RequestState {
  const state = res.locals[STATE_KEY] as RequestState | undefined;
  if (state === undefined) {
    throw new Error('requestContext middleware must run first');
  }
  return state;
}

/**
 * Gives each request an id (sent back as `X-Request-Id`; an incoming one is ignored, since a caller
 * could put anything in it) and writes exactly one summary line when the response closes. Run first
 * for every request by request-start.ts.
 */
export function requestContext(
  logger: Logger,
  newRequestId: () => string,
  refusalLimits: RefusalLimits = DEFAULT_REFUSAL_LIMITS,
  /** Told the same route, status and duration as the summary line (the metrics, src/http/metrics.ts). */
  onFinished?: (route: string, status: number, durationMs: number, serviceId: string | undefined) => void,
  clock: WaitClock = PROCESS_WAIT_CLOCK,
): (req: Request, res: Response) => void {
  // Repeated identical refusals from one client are rate-limited in the log, not in the answer.
  const refusals = createRefusalLimiter(refusalLimits);
  return (req, res) => {
    const state: RequestState = {
      requestId: newRequestId(),
      startedAt: clock.now(),
      arrivalLoopDelayMs: clock.loopDelayMs(),
      route: 'unmatched',
      errorCode: undefined,
      detail: undefined,
    };
    res.locals[STATE_KEY] = state;
    res.setHeader('X-Request-Id', state.requestId);
    res.once('close', () => {
      const nowMs = clock.now();
      const status = res.statusCode;
      // Only refusals (isRefusal) are counted per client (logger.ts), so only they need the client's key.
      const refusal =
        isRefusal(status, state.errorCode)
          ? { limiter: refusals, client: refusalClientKey({ authenticatedIss: state.authenticatedIss, address: req.socket.remoteAddress }), nowMs }
          : undefined;
      logRequestSummary(logger, {
        requestId: state.requestId,
        method: req.method,
        route: state.route,
        status,
        durationMs: nowMs - state.startedAt,
        errorCode: state.errorCode,
        detail: state.detail,
        ...(state.overload === undefined ? {} : { overload: state.overload }),
      }, refusal);
      onFinished?.(state.route, status, nowMs - state.startedAt, state.serviceId);
    });
  };
}
