import type { RouteHandler } from '../respond.js';

/** `GET /healthz`: liveness only. It reads nothing and says nothing about patients or policy. */
export const healthHandler: RouteHandler = () => ({ status: 200, body: { status: 'ok' } });
