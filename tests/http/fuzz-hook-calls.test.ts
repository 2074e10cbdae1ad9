import { performance } from 'node:perf_hooks';
import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { MemoryLog } from '../log/memory-log.js';
import { listenApp, post, type AppServer } from './support/app-server.js';
import {
  answerProblems,
  FUZZ_SEED,
  loadExamples,
  mutate,
  mutation,
  toWire,
  type Example,
  type Json,
} from './support/fuzz-requests.js';
import { buildTestApp, TEST_CONFIG } from './test-app.js';

/**
 * Property-based: the Larkspur Bay example hook calls, mutated one to four times, at all three services.
 * Whatever arrives, the service answers as docs/errors.md promises (see `answerProblems`): never a
 * 5xx, cards that pass CDS Hooks 2.0 §5.3 on every 200, a message on every 4xx. One loopback server
 * for the file; fixed seeds; fast-check prints seed and path on failure.
 */

const SIGN_RUNS = 3500;
const SELECT_RUNS = 1000;
const VIEW_RUNS = 500;
/** Per property: the runs take seconds, not minutes, but a shared 2-core machine can be slow. */
const TIMEOUT_MS = 240_000;
/** Every 20th 200 also has its suggestions checked against the R4 schema (slower: Ajv). */
const R4_EVERY = 20;
/** Generous: the FHIR budget (never used here: no fhirServer) plus slack for a loaded machine. */
const BOUND_MS = TEST_CONFIG.fhir.budgetMs + 2500;

const examples = loadExamples();
let server: AppServer;
let log: MemoryLog;
let now = new Date(0);
let calls = 0;
let slowestMs = 0;
const statuses = new Map<number, number>();

beforeAll(async () => {
  // Every call's line is read below, so no repeated refusal is held back from the log.
  const built = await buildTestApp({
    clock: () => now,
    refusalLogLimits: { maxLinesPerWindow: Number.MAX_SAFE_INTEGER, windowMs: 60_000, maxClients: 10 },
  });
  log = built.log;
  server = await listenApp(built.app);
});

afterAll(async () => {
  await server.close();
});

/** The same example as an order-select call choosing its first draft order. */
function asSelect(example: Example): Example {
  if (example.serviceId === 'oxygen-order-select') return example;
  const body = structuredClone(example.body) as Record<string, Json> & { context: Record<string, Json> };
  const draft = (body.context['draftOrders'] as { entry: { resource: { resourceType: string; id: string } }[] }).entry[0];
  body['hook'] = 'order-select';
  body.context['selections'] = draft === undefined ? [] : [`${draft.resource.resourceType}/${draft.resource.id}`];
  return { ...example, serviceId: 'oxygen-order-select', body };
}

async function checkCall(example: Example, mutations: Parameters<typeof mutate>[1]): Promise<void> {
  now = example.now;
  const text = toWire(mutate(example.body, mutations));
  const started = performance.now();
  const answer = await post(`${server.url}/cds-services/${example.serviceId}`, text);
  slowestMs = Math.max(slowestMs, performance.now() - started);
  statuses.set(answer.status, (statuses.get(answer.status) ?? 0) + 1);
  calls += 1;
  const checkR4 = answer.status === 200 && calls % R4_EVERY === 0;
  expect(answerProblems(answer, JSON.parse(text) as Json, checkR4)).toStrictEqual([]);
}

const signExamples = examples.filter((example) => example.serviceId === 'oxygen-order-sign');
const selectExamples = examples.filter((example) => example.serviceId !== 'oxygen-titration-review').map(asSelect);
const viewExamples = examples.filter((example) => example.serviceId === 'oxygen-titration-review');

describe('mutated hook calls', () => {
  it('never give a 5xx at order-sign, and every answer keeps its promise', async () => {
    await fc.assert(
      fc.asyncProperty(fc.constantFrom(...signExamples), fc.array(mutation, { minLength: 1, maxLength: 4 }), checkCall),
      { numRuns: SIGN_RUNS, seed: FUZZ_SEED },
    );
  }, TIMEOUT_MS);

  it('never give a 5xx at order-select, and every answer keeps its promise', async () => {
    await fc.assert(
      fc.asyncProperty(fc.constantFrom(...selectExamples), fc.array(mutation, { minLength: 1, maxLength: 4 }), checkCall),
      { numRuns: SELECT_RUNS, seed: FUZZ_SEED + 1 },
    );
  }, TIMEOUT_MS);

  it('never give a 5xx at patient-view, and every answer keeps its promise', async () => {
    await fc.assert(
      fc.asyncProperty(fc.constantFrom(...viewExamples), fc.array(mutation, { minLength: 1, maxLength: 4 }), checkCall),
      { numRuns: VIEW_RUNS, seed: FUZZ_SEED + 2 },
    );
  }, TIMEOUT_MS);

  describe('edge cases', () => {
    it('ran every case, a fair share of them through to cards, each within the bound', () => {
      expect(calls).toBe(SIGN_RUNS + SELECT_RUNS + VIEW_RUNS);
      // Mutations that break the request are refused early; enough must get through to the rules
      // (200) or the gathering (412) for the suite to test more than the schema.
      expect(statuses.get(200) ?? 0).toBeGreaterThan(calls * 0.3);
      expect(statuses.get(400) ?? 0).toBeGreaterThan(calls * 0.05);
      expect(slowestMs).toBeLessThan(BOUND_MS);
    });

    it('wrote no patient id, name, birth date or record number to any log line', () => {
      expect(log.lines().length).toBe(calls);
      const text = log.text();
      for (const secret of examples.flatMap((example) => example.secrets)) {
        expect(text.includes(secret), secret).toBe(false);
      }
    });
  });
});
