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
  if (result.headers !== undefined) {
    for (const [name, value] of Object.entries(result.headers)) {
      res.setHeader(name, value);
    }
  }
  if (result.body !== undefined && writesDirectly(res, result.status)) {
    writeJson(res, result.status, result.body);
  } else {
    res.status(result.status).json(result.body);
  }
}

/** express's `res.json` Content-Type for a JSON answer (it adds the charset itself). */
const JSON_CONTENT_TYPE = 'application/json; charset=utf-8';

/**
 * Whether the answer can be written without express's `res.json`, byte for byte as it would write
 * it. express's `send` reads the request's freshness (GET and HEAD only: a 304 for `If-None-Match:
 * *`), leaves out the body of a HEAD and of 204, 205 and 304, and keeps a Content-Type already
 * set: none of these applies to a POST answered with a body and no Content-Type or
 * Transfer-Encoding of its own, which is every hook call and its errors. The rest go through express.
 */
function writesDirectly(res: Response, status: number): boolean {
  return (
    res.req.method === 'POST' &&
    status !== 204 &&
    status !== 205 &&
    status !== 304 &&
    !res.hasHeader('Content-Type') &&
    !res.hasHeader('Transfer-Encoding')
  );
}

/**
 * What `res.status(status).json(body)` sends for a body that is not undefined (for undefined express
 * sends no length), with no JSON replacer, spaces or escape setting (app.ts sets none) and ETags
 * off: the same headers in the same order and the same bytes, without express's header lookups and
 * its copy of the text into a Buffer (issue 9: the shell's cost per call).
 */
function writeJson(res: Response, status: number, body: unknown): void {
  const text = JSON.stringify(body);
  res.statusCode = status;
  res.setHeader('Content-Type', JSON_CONTENT_TYPE);
  res.setHeader('Content-Length', String(Buffer.byteLength(text)));
  res.end(text);
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
