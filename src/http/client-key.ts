import type { Request, Response } from 'express';
import { authenticatedClient, DEMO_CLIENT } from './auth.js';

/**
 * Who a hook call counts against for its client's share of the evaluation slots (overload.ts). In
 * production the signed token names the client: its issuer, alone. The tenant claim is left out, since a
 * client whose trust entry lists no tenants may put any text there and so could widen its share at will
 * (the replay cache shares by the same rule, jwt-verifier.ts); a multi-tenant issuer's tenants share
 * one share. A proxy in front makes every caller share one address, so the address is never used there. The demo has one made-up client for every caller,
 * so there the caller's address stands for the client; the demo listens on loopback only, where each
 * local program or test can still be told apart by the address it binds to.
 */
export function clientKeyOf(req: Request, res: Response): string {
  const client = authenticatedClient(res);
  if (client.iss === DEMO_CLIENT.iss) {
    return `address:${req.socket.remoteAddress ?? 'unknown'}`;
  }
  return `iss:${client.iss}`;
}
