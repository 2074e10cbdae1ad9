import type { IncomingMessage, ServerResponse } from 'node:http';
import type { RequestHandler } from 'express';
import { requestState } from './request-context.js';

/**
 * CORS for browser-based CDS clients (CDS Hooks 2.0 §Security › Cross-Origin Resource Sharing).
 * Auth rides in the Authorization header, never in cookies, so credentials are not allowed: `*` is
 * safe for the demo, and production names its EHR origins in an allowlist.
 */
export const CORS_ALLOW_METHODS = 'GET, POST, OPTIONS';
export const CORS_ALLOW_HEADERS = 'Authorization, Content-Type';
/** Seconds a browser may cache a preflight answer (common practice: minutes, not days). */
export const CORS_MAX_AGE_SECONDS = 600;

/** Adds the Allow-Origin headers to every response a permitted origin may read (request-start.ts). */
export function corsHeaderSetter(origins: '*' | readonly string[]): (req: IncomingMessage, res: ServerResponse) => void {
  const allowed = origins === '*' ? undefined : new Set(origins);
  return (req, res) => {
    if (allowed === undefined) {
      res.setHeader('Access-Control-Allow-Origin', '*');
    } else {
      res.setHeader('Vary', 'Origin');
      const origin = req.headers.origin;
      if (origin !== undefined && allowed.has(origin)) {
        res.setHeader('Access-Control-Allow-Origin', origin);
      }
    }
    res.setHeader('Access-Control-Expose-Headers', 'X-Request-Id, WWW-Authenticate');
  };
}

/** Answers a preflight `OPTIONS` with 204 and the methods and headers the service accepts. */
export const answerPreflight: RequestHandler = (_req, res) => {
  requestState(res).route = 'preflight';
  res.setHeader('Access-Control-Allow-Methods', CORS_ALLOW_METHODS);
  res.setHeader('Access-Control-Allow-Headers', CORS_ALLOW_HEADERS);
  res.setHeader('Access-Control-Max-Age', String(CORS_MAX_AGE_SECONDS));
  res.status(204).end();
};
