import { performance } from 'node:perf_hooks';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { JSON_LIMITS, MAX_DRAFT_ORDER_ENTRIES } from '../../src/http/json-limits.js';
import { conformanceProblems } from '../helpers/card-conformance.js';
import { orderSignRequest, oxygenOrder, searchset, spo2 } from './larkspur-fixtures.js';
import { get, listenApp, post, send as sendRaw, type Answer, type AppServer } from './support/app-server.js';
import { buildTestApp, TEST_CONFIG } from './test-app.js';

/**
 * Bodies built to break a JSON service, on all three routes. Each must get a 4xx whose message (and,
 * where a field is at fault, an issue path) says what was wrong, quickly; never a 5xx, never a hang.
 * Statuses: RFC 9110 §15.5.1 (400), §15.5.14 (413), §15.5.16 (415); limits: docs/api.md, Robustness.
 */

const SERVICE = '/cds-services/oxygen-order-sign';
const FEEDBACK = '/cds-services/oxygen-order-sign/feedback';
const DISCOVERY = '/cds-services';
/** Generous: the configured FHIR budget plus slack for a loaded 2-core machine. */
const BOUND_MS = TEST_CONFIG.fhir.budgetMs + 2500;
const JSON_HEADERS = { 'Content-Type': 'application/json' };

let server: AppServer;

beforeAll(async () => {
  server = await listenApp((await buildTestApp()).app);
});

afterAll(async () => {
  await server.close();
});

async function timed(call: () => Promise<Answer>): Promise<Answer> {
  const started = performance.now();
  const answer = await call();
  expect(performance.now() - started).toBeLessThan(BOUND_MS);
  return answer;
}

function send(path: string, body: unknown, headers: Record<string, string> = JSON_HEADERS): Promise<Answer> {
  return timed(() => post(`${server.url}${path}`, body, headers));
}

/** A JSON text nested `depth` levels: `{"extension":[{"extension":[...]}]}`, innermost a url. */
function nestedExtensions(depth: number): string {
  return `${'{"url":"urn:larkspur-bay:x","extension":['.repeat(depth)}{"url":"urn:larkspur-bay:x"}${']}'.repeat(depth)}`;
}

/** The order-sign request as text, with `raw` JSON spliced in as the draft order's `extension`. */
function withRawExtension(raw: string): string {
  const text = JSON.stringify(orderSignRequest());
  return text.replace('"resourceType":"ServiceRequest",', `"resourceType":"ServiceRequest","extension":[${raw}],`);
}

function draftWith(mutate: (order: Record<string, unknown>) => void): Record<string, unknown> {
  const request = orderSignRequest();
  const entry = (request['context'] as { draftOrders: { entry: { resource: Record<string, unknown> }[] } }).draftOrders
    .entry[0];
  if (entry !== undefined) mutate(entry.resource);
  return request;
}

function expectError(answer: Answer, status: number, code: string): void {
  expect(answer.status).toBe(status);
  const body = answer.body as { code?: unknown; message?: unknown };
  expect(body.code).toBe(code);
  expect(typeof body.message).toBe('string');
}

function expectIssue(answer: Answer, pathPrefix: string, message: string): void {
  expectError(answer, 400, 'CDS_ERR_REQUEST_TOO_COMPLEX');
  const issues = (answer.body as { issues: { path: string; message: string }[] }).issues;
  expect(issues).toHaveLength(1);
  expect(issues[0]?.path.startsWith(pathPrefix), issues[0]?.path).toBe(true);
  expect(issues[0]?.message).toBe(message);
}

describe('hostile request bodies', () => {
  describe('size and media type', () => {
    it.each([SERVICE, FEEDBACK, DISCOVERY])('answers 413 for a body over the size limit on %s', async (path) => {
      const padded = JSON.stringify({ ...orderSignRequest(), padding: 'x'.repeat(TEST_CONFIG.bodyLimitBytes) });
      const answer =
        path === DISCOVERY
          ? await timed(() => sendRaw(`${server.url}${path}`, 'GET', JSON_HEADERS, padded))
          : await send(path, padded);
      expectError(answer, 413, 'CDS_ERR_PAYLOAD_TOO_LARGE');
    });

    it.each([
      ['text/plain', { 'Content-Type': 'text/plain' }],
      ['form encoding', { 'Content-Type': 'application/x-www-form-urlencoded' }],
      ['no content type', {}],
      ['a charset body-parser cannot read', { 'Content-Type': 'application/json; charset=latin1' }],
    ] as const)('answers 415 for %s on the service and feedback routes', async (_name, headers) => {
      for (const path of [SERVICE, FEEDBACK]) {
        expectError(await send(path, JSON.stringify(orderSignRequest()), headers), 415, 'CDS_ERR_UNSUPPORTED_MEDIA_TYPE');
      }
    });

    it.each([
      ['a truncated body', '{"hook":"order-sign","context":{'],
      ['Infinity, which JSON does not have', '{"hook":"order-sign","n":Infinity}'],
      ['NaN, which JSON does not have', '{"hook":"order-sign","n":NaN}'],
      ['a bare number (strict JSON bodies are objects or arrays)', '95'],
      ['an empty JSON text', ' '],
    ])('answers 400 for %s', async (_name, text) => {
      for (const path of [SERVICE, FEEDBACK]) {
        const answer = await send(path, text);
        expect(answer.status).toBe(400);
        expect(typeof (answer.body as { message?: unknown }).message).toBe('string');
      }
    });
  });

  describe('nesting', () => {
    it.each([
      ['10,000 levels of extensions', nestedExtensions(10_000)],
      ['100,000 levels of arrays', `${'['.repeat(100_000)}${']'.repeat(100_000)}`],
    ])('refuses a draft order nested %s deep, naming where', async (_name, raw) => {
      const answer = await send(SERVICE, withRawExtension(raw));
      expectIssue(answer, 'context.draftOrders.entry.0.resource.extension', `nests deeper than ${JSON_LIMITS.maxDepth} levels`);
    });

    it('refuses nested prefetch data, naming the key', async () => {
      const request = JSON.stringify(orderSignRequest()).replace('"prefetch":{', `"prefetch":{"deep":${'['.repeat(10_000)}${']'.repeat(10_000)},`);
      expectIssue(await send(SERVICE, request), 'prefetch.deep', `nests deeper than ${JSON_LIMITS.maxDepth} levels`);
    });

    it('refuses deep nesting on the feedback and discovery routes too', async () => {
      const feedback = `{"feedback":[{"card":"x","outcome":"overridden","outcomeTimestamp":"2025-03-14T09:00:00Z","extension":${nestedExtensions(10_000)}}]}`;
      expectIssue(await send(FEEDBACK, feedback), 'feedback.0.extension', `nests deeper than ${JSON_LIMITS.maxDepth} levels`);
      const deep = `${'['.repeat(10_000)}${']'.repeat(10_000)}`;
      const answer = await timed(() => sendRaw(`${server.url}${DISCOVERY}`, 'GET', JSON_HEADERS, deep));
      expectIssue(answer, '0.0.0', `nests deeper than ${JSON_LIMITS.maxDepth} levels`);
    });

    it('reads nesting within the limit as an ordinary extension', async () => {
      // 25 extensions are 50 levels (an object and an array each), under the limit with the request's own.
      const answer = await send(SERVICE, withRawExtension(nestedExtensions(25)));
      expect(answer.status).toBe(200);
      expect(conformanceProblems(answer.body)).toStrictEqual([]);
    });
  });

  describe('huge lists', () => {
    const empties = (n: number): unknown[] => Array.from({ length: n }, () => ({}));

    it('refuses 100,000 draft order entries, naming the list', async () => {
      const request = draftWith(() => undefined);
      (request['context'] as { draftOrders: { entry: unknown[] } }).draftOrders.entry = empties(100_000);
      expectIssue(await send(SERVICE, request), 'context.draftOrders.entry', `has more than ${JSON_LIMITS.maxArrayItems} items`);
    });

    it('refuses more draft orders than one call may carry', async () => {
      const request = orderSignRequest();
      const entry = Array.from({ length: MAX_DRAFT_ORDER_ENTRIES + 1 }, (_, i) => ({ resource: { ...oxygenOrder, id: `lb-o2-${i}` } }));
      (request['context'] as { draftOrders: { entry: unknown[] } }).draftOrders.entry = entry;
      expectIssue(
        await send(SERVICE, request),
        'context.draftOrders.entry',
        `has more than ${MAX_DRAFT_ORDER_ENTRIES} draft orders; send them in smaller calls`,
      );
    });

    it('refuses 100,000 prefetch entries and 100,000 feedback items', async () => {
      const request = orderSignRequest();
      (request['prefetch'] as Record<string, unknown>)['observations'] = { resourceType: 'Bundle', type: 'searchset', entry: empties(100_000) };
      expectIssue(await send(SERVICE, request), 'prefetch.observations.entry', `has more than ${JSON_LIMITS.maxArrayItems} items`);
      expectIssue(await send(FEEDBACK, { feedback: empties(100_000) }), 'feedback', `has more than ${JSON_LIMITS.maxArrayItems} items`);
    });

    it('reads 2,000 prefetched observations within the bound, naming the key read only in part', async () => {
      const request = orderSignRequest();
      const many = Array.from({ length: 2000 }, (_, i) => ({ ...spo2, id: `lb-obs-spo2-${i}` }));
      (request['prefetch'] as Record<string, unknown>)['observations'] = searchset(many);
      const answer = await send(SERVICE, request);
      expect(answer.status).toBe(200);
      expect(conformanceProblems(answer.body)).toStrictEqual([]);
      // gather-pages.ts keeps 1,000 resources per key; the rest make the key incomplete.
      expect(answer.text).toContain('observations (incomplete: more results than could be read)');
    });
  });

  describe('long texts', () => {
    it('refuses a hookInstance of half a million characters, naming it', async () => {
      const answer = await send(SERVICE, orderSignRequest({ hookInstance: 'h'.repeat(500_000) }));
      expectIssue(answer, 'hookInstance', `is longer than ${JSON_LIMITS.maxStringChars} characters`);
    });

    it('refuses an order text of 100,000 characters, naming the field', async () => {
      const request = draftWith((order) => {
        order['patientInstruction'] = 'Oxygen 2 L/min via nasal cannula, target SpO2 88-92 %. '.repeat(1800);
      });
      expectIssue(await send(SERVICE, request), 'context.draftOrders.entry.0.resource.patientInstruction', `is longer than ${JSON_LIMITS.maxStringChars} characters`);
    });

    it('refuses an object key of 10,000 characters, naming its parent', async () => {
      const request = draftWith((order) => {
        order['k'.repeat(10_000)] = 1;
      });
      expectIssue(await send(SERVICE, request), 'context.draftOrders.entry.0.resource', `has a key longer than ${JSON_LIMITS.maxStringChars} characters`);
    });

    it('reads a long narrative div, which no order-text reader looks at', async () => {
      const request = draftWith((order) => {
        order['text'] = { status: 'generated', div: `<div xmlns="http://www.w3.org/1999/xhtml">${'Oxygen. '.repeat(25_000)}</div>` };
      });
      const answer = await send(SERVICE, request);
      expect(answer.status).toBe(200);
      expect(conformanceProblems(answer.body)).toStrictEqual([]);
    });

    it('answers within the bound for texts at the limit, dense with things the readers look for', async () => {
      const dense = 'no 94-98%, target SpO2 88-92% via venturi 28% at 4 L/min; '.repeat(80).slice(0, JSON_LIMITS.maxStringChars);
      const request = orderSignRequest();
      const entry = Array.from({ length: 50 }, (_, i) => ({
        resource: { ...oxygenOrder, id: `lb-o2-${i}`, code: { ...oxygenOrder.code, text: dense }, patientInstruction: dense, note: [{ text: dense }] },
      }));
      (request['context'] as { draftOrders: { entry: unknown[] } }).draftOrders.entry = entry;
      const answer = await send(SERVICE, request);
      expect(answer.status).toBe(200);
    });
  });

  describe('edge cases', () => {
    it.each([
      ['hook', 5, 'hook'],
      ['context', [], 'context'],
      ['hookInstance', {}, 'hookInstance'],
      ['prefetch', [], 'prefetch'],
      ['fhirServer', 5, 'fhirServer'],
    ])('answers 400 naming %s when it has the wrong type', async (key, value, path) => {
      const answer = await send(SERVICE, orderSignRequest({ [key]: value }));
      expect(answer.status).toBe(400);
      const issues = (answer.body as { issues?: { path: string }[] }).issues ?? [];
      expect(issues.map((issue) => issue.path)).toContain(path);
    });

    it('answers 400 naming a selection that points at no draft order', async () => {
      const request = { ...orderSignRequest({ hook: 'order-select' }) };
      (request['context'] as Record<string, unknown>)['selections'] = ['ServiceRequest/lb-o2-nowhere'];
      const answer = await send('/cds-services/oxygen-order-select', request);
      expect(answer.status).toBe(400);
      expect((answer.body as { issues: unknown }).issues).toStrictEqual([
        { path: 'context.selections.0', message: 'does not point to an entry in draftOrders' }, // Hook Library STU1 order-select
      ]);
    });

    it('stays healthy after all of the above', async () => {
      const answer = await send(SERVICE, orderSignRequest());
      expect(answer.status).toBe(200);
      expect(conformanceProblems(answer.body)).toStrictEqual([]);
      expect((await get(`${server.url}${DISCOVERY}`)).status).toBe(200);
    });
  });
});

