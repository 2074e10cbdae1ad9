import type { Request, RequestHandler } from 'express';
import { AppError } from './errors.js';

/**
 * The pluggable authentication seam: one function decides, one middleware enforces. The demo passes
 * every request; the production trust configuration (CDS Hooks 2.0 §Trusting CDS Clients: a signed
 * JWT checked for iss, aud, exp, jti and signature) plugs in here without touching any route.
 */
export type AuthResult =
  | { readonly kind: 'allowed'; readonly client: string }
  | {
      readonly kind: 'denied';
      readonly reason: 'missing' | 'invalid-token';
      /** Why, for the operator only; never sent to the client and never containing the token. */
      readonly cause?: unknown;
    };

export type Authenticate = (req: Request) => Promise<AuthResult>;

/** Demo mode: authentication off. Only for the loopback demo, never for clinical use. */
export const allowEveryRequest: Authenticate = () =>
  Promise.resolve({ kind: 'allowed', client: 'demo' });

/** Runs `authenticate` and turns a denial into the catalogue's 401 with a generic challenge. */
export function requireAuthentication(authenticate: Authenticate): RequestHandler {
  return async (req, _res, next) => {
    const result = await authenticate(req);
    if (result.kind === 'denied') {
      const code = result.reason === 'missing' ? 'CDS_ERR_AUTH_MISSING' : 'CDS_ERR_AUTH_INVALID_TOKEN';
      throw new AppError(code, result.cause === undefined ? {} : { cause: result.cause });
    }
    next();
  };
}
