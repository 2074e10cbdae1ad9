import type { RequestHandler } from 'express';
import type { PolicyHolder } from '../live-policy/policy-snapshot.js';
import type { Logger } from '../log/logger.js';
import type { RefusalLimits } from '../log/refusal-limiter.js';
import { corsHeaderSetter } from './cors.js';
import { pinPolicy } from './pinned-policy.js';
import { requestContext, type WaitClock } from './request-context.js';
import { securityHeaderSetter, type SecurityHeaderOptions } from './security-headers.js';

/**
 * What every request gets before any route runs, in this order: the security headers, its id and
 * summary line, the policy snapshot it keeps to the end, and the CORS headers. One middleware rather
 * than four, so each request pays one router step for them (issue 9: the shell's cost per call).
 */
export interface RequestStartOptions {
  readonly securityHeaders: SecurityHeaderOptions;
  readonly logger: Logger;
  readonly newRequestId: () => string;
  readonly refusalLimits?: RefusalLimits;
  readonly policy: PolicyHolder;
  readonly corsOrigins: '*' | readonly string[];
  /** Told each request's route name, status and duration when it closes (the metrics). */
  readonly onRequestFinished?: (route: string, status: number, durationMs: number, serviceId: string | undefined) => void;
  /** When each request arrived and how late the loop ran then (request-context.ts); the process's by default. */
  readonly clock?: WaitClock;
}

export function startRequest(options: RequestStartOptions): RequestHandler {
  const setSecurityHeaders = securityHeaderSetter(options.securityHeaders);
  const beginContext = requestContext(
    options.logger,
    options.newRequestId,
    options.refusalLimits,
    options.onRequestFinished,
    options.clock,
  );
  const pin = pinPolicy(options.policy);
  const setCorsHeaders = corsHeaderSetter(options.corsOrigins);
  return (req, res, next) => {
    setSecurityHeaders(res);
    beginContext(req, res);
    pin(res);
    setCorsHeaders(req, res);
    next();
  };
}
