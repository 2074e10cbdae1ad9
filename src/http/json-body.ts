import express, { type Request, type RequestHandler } from 'express';
import { AppError } from './errors.js';
import {
  describeBreach,
  describeBreachPath,
  findJsonLimitBreach,
  MAX_DRAFT_ORDER_ENTRIES,
} from './json-limits.js';

/** Media types read as JSON: `application/json` and the `+json` family (e.g. application/fhir+json). */
const JSON_TYPES = ['application/json', 'application/*+json'];

function hasBody(headers: Readonly<Record<string, string | string[] | undefined>>): boolean {
  const length = headers['content-length'];
  return headers['transfer-encoding'] !== undefined || (length !== undefined && length !== '0');
}

/**
 * POST bodies must be JSON (415 otherwise). A POST with no body at all passes here and is refused by
 * the request schema with a 400 naming what is missing, which tells the caller more.
 */
function refuseNonJson(req: Request): void {
  if (req.method === 'POST' && hasBody(req.headers) && req.is(JSON_TYPES) === false) {
    throw new AppError('CDS_ERR_UNSUPPORTED_MEDIA_TYPE');
  }
}

function draftEntryCount(body: unknown): number {
  const context = (body as { context?: unknown } | null)?.context;
  const draftOrders = (context as { draftOrders?: unknown } | null | undefined)?.draftOrders;
  const entry = (draftOrders as { entry?: unknown } | null | undefined)?.entry;
  return Array.isArray(entry) ? entry.length : 0;
}

/**
 * A parsed body beyond the structural limits of json-limits.ts, as a 400 naming where, so no
 * recursive code further in (ours, zod's or JSON.stringify's) meets a value it cannot handle.
 */
function limitsBreach(body: unknown): AppError | undefined {
  const breach = findJsonLimitBreach(body);
  if (breach !== undefined) {
    return new AppError('CDS_ERR_REQUEST_TOO_COMPLEX', {
      issues: [{ path: describeBreachPath(breach.path), message: describeBreach(breach.kind) }],
    });
  }
  if (draftEntryCount(body) > MAX_DRAFT_ORDER_ENTRIES) {
    return new AppError('CDS_ERR_REQUEST_TOO_COMPLEX', {
      issues: [
        {
          path: 'context.draftOrders.entry',
          message: `has more than ${MAX_DRAFT_ORDER_ENTRIES} draft orders; send them in smaller calls`,
        },
      ],
    });
  }
  return undefined;
}

/**
 * One step for the body of every call: the media type (415), then express.json with a size cap, then
 * the structural limits. body-parser's errors are mapped to the catalogue by the error middleware.
 */
export function parseJsonBody(limitBytes: number): RequestHandler {
  const parse = express.json({ limit: limitBytes, strict: true, type: JSON_TYPES });
  return (req, res, next) => {
    refuseNonJson(req);
    parse(req, res, (error?: unknown) => {
      // Called from the body stream's events, so errors go to next(), never thrown.
      if (error !== undefined && error !== null) {
        next(error);
        return;
      }
      const breach = limitsBreach(req.body);
      if (breach !== undefined) {
        next(breach);
        return;
      }
      next();
    });
  };
}
