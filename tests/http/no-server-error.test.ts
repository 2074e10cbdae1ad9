import fc from 'fast-check';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { expectConformant } from '../helpers/card-conformance.js';
import { orderSignRequest } from './larkspur-fixtures.js';
import { buildTestApp } from './test-app.js';

/**
 * House style and docs/errors.md: nothing a caller sends may produce a 5xx. These properties throw
 * arbitrary JSON, and valid requests with one part replaced by arbitrary JSON, at the service and
 * feedback routes.
 */

/** Replaces the value at `path` (a list of keys) in a copy of `value`. */
function replaceAt(value: unknown, path: readonly string[], replacement: unknown): unknown {
  if (path.length === 0) return replacement;
  if (value === null || typeof value !== 'object') return value;
  const copy = (Array.isArray(value) ? [...value] : { ...value }) as Record<string, unknown>;
  const [head, ...rest] = path;
  if (head === undefined) return copy;
  copy[head] = replaceAt(copy[head], rest, replacement);
  return copy;
}

const PATHS: readonly (readonly string[])[] = [
  ['hook'],
  ['hookInstance'],
  ['context'],
  ['context', 'patientId'],
  ['context', 'userId'],
  ['context', 'encounterId'],
  ['context', 'draftOrders'],
  ['context', 'draftOrders', 'entry'],
  ['context', 'draftOrders', 'entry', '0', 'resource'],
  ['context', 'draftOrders', 'entry', '0', 'resource', 'code'],
  ['prefetch'],
  ['prefetch', 'patient'],
  ['prefetch', 'observations'],
  ['prefetch', 'observations', 'entry', '0', 'resource', 'valueQuantity'],
  ['prefetch', 'conditions', 'entry'],
  ['fhirServer'],
  ['fhirAuthorization'],
  ['extension'],
];

describe('no caller input produces a 5xx', () => {
  it('holds for arbitrary JSON bodies', async () => {
    const { app } = await buildTestApp();
    await fc.assert(
      fc.asyncProperty(fc.json(), fc.constantFrom('/cds-services/oxygen-order-sign', '/cds-services/oxygen-order-sign/feedback'), async (text, path) => {
        const response = await request(app).post(path).set('Content-Type', 'application/json').send(text);
        expect(response.status).toBeLessThan(500);
        expect(response.headers['content-type']).toMatch(/^application\/(fhir\+)?json; charset=utf-8$/);
      }),
      { numRuns: 60 },
    );
  });

  it('holds for a valid order-sign request with one part replaced by arbitrary JSON', async () => {
    const { app } = await buildTestApp();
    await fc.assert(
      fc.asyncProperty(fc.constantFrom(...PATHS), fc.jsonValue(), async (path, replacement) => {
        const body = replaceAt(orderSignRequest(), path, replacement);
        const response = await request(app).post('/cds-services/oxygen-order-sign').send(body as object);
        expect(response.status).toBeLessThan(500);
        if (response.status === 200) {
          expectConformant(response.body);
        }
      }),
      { numRuns: 120 },
    );
  });
});
