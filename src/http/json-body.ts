import express, { type RequestHandler } from 'express';
import { AppError } from './errors.js';

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

/** express.json with a size cap; its errors are mapped to the catalogue by the error middleware. */
export function parseJsonBody(limitBytes: number): RequestHandler {
  return express.json({ limit: limitBytes, strict: true, type: JSON_TYPES });
}
