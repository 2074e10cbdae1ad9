import express, { type RequestHandler } from 'express';
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
export const requireJsonContentType: RequestHandler = (req, _res, next) => {
  if (req.method === 'POST' && hasBody(req.headers) && req.is(JSON_TYPES) === false) {
    throw new AppError('CDS_ERR_UNSUPPORTED_MEDIA_TYPE');
  }
  next();
};

function draftEntryCount(body: unknown): number {
  const context = (body as { context?: unknown } | null)?.context;
  const draftOrders = (context as { draftOrders?: unknown } | null | undefined)?.draftOrders;
  const entry = (draftOrders as { entry?: unknown } | null | undefined)?.entry;
  return Array.isArray(entry) ? entry.length : 0;
}

/**
 * Refuses a parsed body beyond the structural limits of json-limits.ts with a 400 naming where, so
 * no recursive code further in (ours, zod's or JSON.stringify's) meets a value it cannot handle.
 */
export const checkJsonLimits: RequestHandler = (req, _res, next) => {
  const body: unknown = req.body;
  const breach = findJsonLimitBreach(body);
  if (breach !== undefined) {
    throw new AppError('CDS_ERR_REQUEST_TOO_COMPLEX', {
      issues: [{ path: describeBreachPath(breach.path), message: describeBreach(breach.kind) }],
    });
  }
  if (draftEntryCount(body) > MAX_DRAFT_ORDER_ENTRIES) {
    throw new AppError('CDS_ERR_REQUEST_TOO_COMPLEX', {
      issues: [
        {
          path: 'context.draftOrders.entry',
          message: `has more than ${MAX_DRAFT_ORDER_ENTRIES} draft orders; send them in smaller calls`,
        },
      ],
    });
  }
  next();
};

/**
 * express.json with a size cap, then the structural limits; body-parser's errors are mapped to the
 * catalogue by the error middleware.
 */
export function parseJsonBody(limitBytes: number): RequestHandler[] {
  return [express.json({ limit: limitBytes, strict: true, type: JSON_TYPES }), checkJsonLimits];
}
