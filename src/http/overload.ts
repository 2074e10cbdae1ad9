import type { RequestHandler } from 'express';
import { AppError } from './errors.js';
import { requestState } from './request-context.js';

/**
 * A cap on hook calls evaluated at once. Past it a call is refused at once with 503 and
 * `Retry-After` (RFC 9110 §15.6.4 and §10.2.3) rather than queued: an EHR waits on a hook call
 * synchronously, and a queue that grows under load only turns every answer late, where a quick 503
 * lets the client show the order without advice and try again (CDS Hooks 2.0: advice never blocks).
 */

/** Seconds a refused client is asked to wait: hook calls take well under a second (cds-hooks.md §3.4). */
export const RETRY_AFTER_SECONDS = 1;

export interface EvaluationGate {
  /** Admits the call or throws the 503; the slot is given back when the response closes. */
  readonly admit: RequestHandler;
  /** Calls admitted and not yet answered. */
  readonly inFlight: () => number;
}

export function createEvaluationGate(maxConcurrent: number): EvaluationGate {
  let inFlight = 0;
  const admit: RequestHandler = (_req, res, next) => {
    if (inFlight >= maxConcurrent) {
      // The refusal's summary line names the route it refused, as the handler would have.
      requestState(res).route = 'service';
      res.setHeader('Retry-After', String(RETRY_AFTER_SECONDS));
      throw new AppError('CDS_ERR_OVERLOADED');
    }
    inFlight += 1;
    let released = false;
    // `close` fires once the response is sent or the connection drops, whichever comes first.
    res.once('close', () => {
      if (!released) {
        released = true;
        inFlight -= 1;
      }
    });
    next();
  };
  return { admit, inFlight: () => inFlight };
}
