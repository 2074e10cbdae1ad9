import type { ServerOptions } from 'node:http';
import type { ConnectionTimeouts } from '../config/env-config.js';

/**
 * The Node server options that bound how long a client may hold a connection. Node checks request
 * and header deadlines on a sweep (`connectionsCheckingInterval`, 30 s by default), so a deadline of
 * a few seconds would otherwise be overshot by up to 30 s: the sweep runs at a quarter of the shorter
 * deadline, at most once a second and at least every 50 ms.
 */
export function serverTimeoutOptions(timeouts: ConnectionTimeouts): ServerOptions {
  const shorter = Math.min(timeouts.requestTimeoutMs, timeouts.headersTimeoutMs);
  return {
    requestTimeout: timeouts.requestTimeoutMs,
    headersTimeout: timeouts.headersTimeoutMs,
    keepAliveTimeout: timeouts.keepAliveTimeoutMs,
    connectionsCheckingInterval: Math.max(50, Math.min(1000, Math.floor(shorter / 4))),
  };
}
