import { createHash } from 'node:crypto';
import type { RequestHandler } from 'express';
import { REVIEW_STYLE } from '../review/layout.js';

/**
 * Headers of every /review response, pages, JSON and errors alike. The pages run no script and load
 * nothing: the one inline style sheet is allowed by its hash (CSP Level 3 §8.3 hash-source), forms
 * submit only to this service, nothing may frame them, and `<base>` cannot redirect their links.
 * Browsers may not read the review JSON from another origin: the CORS headers the app adds for CDS
 * clients are taken off here.
 */

/** `'sha256-…'` of the style sheet exactly as the layout writes it. */
export const REVIEW_STYLE_HASH = `'sha256-${createHash('sha256').update(REVIEW_STYLE, 'utf8').digest('base64')}'`;

export const REVIEW_CSP = [
  "default-src 'none'",
  `style-src ${REVIEW_STYLE_HASH}`,
  "form-action 'self'",
  "frame-ancestors 'none'",
  "base-uri 'none'",
].join('; ');

export const REVIEW_HEADERS: Readonly<Record<string, string>> = {
  'Content-Security-Policy': REVIEW_CSP,
  'Referrer-Policy': 'no-referrer',
  'Cache-Control': 'no-store',
  'X-Content-Type-Options': 'nosniff',
  'X-Frame-Options': 'DENY',
};

const CORS_HEADERS = ['Access-Control-Allow-Origin', 'Access-Control-Expose-Headers', 'Access-Control-Allow-Methods', 'Access-Control-Allow-Headers', 'Access-Control-Max-Age'];

export const reviewHeaders: RequestHandler = (_req, res, next) => {
  for (const name of CORS_HEADERS) {
    res.removeHeader(name);
  }
  for (const [name, value] of Object.entries(REVIEW_HEADERS)) {
    res.setHeader(name, value);
  }
  next();
};
