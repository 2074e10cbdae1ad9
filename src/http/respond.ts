import type { Request, RequestHandler, Response } from 'express';
import type { RequestDetail } from '../log/logger.js';
import type { HttpResult } from './errors.js';
import { requestState } from './request-context.js';

/** What a route handler returns: the response, and the decision-level facts for its log line. */
export interface RouteResult extends HttpResult {
  readonly detail?: RequestDetail;
}

export type RouteHandler = (req: Request, res: Response) => Promise<RouteResult> | RouteResult;

/**
 * The one writer. A handler cannot send twice because it never sees how sending works; errors it
 * throws (or rejections) go to the error middleware, which also ends in `sendResult`.
 */
export function sendResult(res: Response, result: HttpResult): void {
  if (res.headersSent) {
    return;
  }
  for (const [name, value] of Object.entries(result.headers ?? {})) {
    res.setHeader(name, value);
  }
  res.status(result.status).json(result.body);
}

/**
 * Adapts a handler to express, naming the route for the log line (never the raw URL). A handler's
 * promise is followed directly, without another async layer; a rejection (or a throw) goes to the
 * error middleware, as express 5 would send it.
 */
export function route(name: string, handler: RouteHandler): RequestHandler {
  return (req, res, next) => {
    const state = requestState(res);
    state.route = name;
    const send = (result: RouteResult): void => {
      try {
        if (result.detail !== undefined) {
          state.detail = result.detail;
        }
        sendResult(res, result);
      } catch (error) {
        next(error);
      }
    };
    const result = handler(req, res);
    if (result instanceof Promise) {
      void result.then(send, next);
    } else {
      send(result);
    }
  };
}
