import fc from 'fast-check';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { MemoryLog } from '../log/memory-log.js';
import { fhirAuthorization, TOKEN } from './larkspur-fixtures.js';
import { listenApp, post, send, type AppServer } from './support/app-server.js';
import { startFaultFhirServer, type Fault, type FaultFhirServer } from './support/fault-fhir-server.js';
import {
  answerProblems,
  FUZZ_SEED,
  garbage,
  loadExamples,
  mutate,
  mutation,
  toWire,
  type Example,
  type Json,
} from './support/fuzz-requests.js';
import { buildTestApp } from './test-app.js';

/**
 * Property-based, at the edges the hook-call suite does not reach: feedback bodies (CDS Hooks 2.0
 * §Feedback) mutated, bytes that are barely JSON or not JSON at all on every route and media type,
 * and hook calls that send the service to a FHIR server that fails in one of the quick ways (each
 * answer still keeps the promises of docs/errors.md; `answerProblems`).
 */

const FEEDBACK_RUNS = 2500;
const RAW_RUNS = 2000;
const FALLBACK_RUNS = 1000;
const TIMEOUT_MS = 240_000;
/** The FHIR limits for the fallback property: small, so failures are quick. */
const LIMITS = { callTimeoutMs: 250, budgetMs: 500, maxResponseBytes: 262_144, maxPages: 3 };

const examples = loadExamples();
let server: AppServer;
let fhir: FaultFhirServer;
let log: MemoryLog;
let now = new Date(0);
let calls = 0;
const rejections: unknown[] = [];
const onRejection = (reason: unknown): void => {
  rejections.push(reason);
};

beforeAll(async () => {
  process.on('unhandledRejection', onRejection);
  fhir = await startFaultFhirServer({ slowMs: 60_000 });
  // The demo's staff access, so GET /policy is on the routes fuzzed too.
  const built = await buildTestApp({ clock: () => now, review: { access: { mode: 'demo' } } }, { fhir: LIMITS });
  log = built.log;
  server = await listenApp(built.app);
});

afterAll(async () => {
  process.off('unhandledRejection', onRejection);
  await server.close();
  await fhir.close();
});

const feedbackBody = {
  feedback: [
    {
      card: '0f4b7d4e-8a51-5c1e-9d0a-3c7e2b6a9f10',
      outcome: 'accepted',
      acceptedSuggestions: [{ id: '6d2a1c3b-4e5f-5a6b-8c7d-9e0f1a2b3c4d' }],
      outcomeTimestamp: '2026-11-30T09:46:00Z',
    },
    {
      card: '1a2b3c4d-5e6f-5a7b-8c9d-0e1f2a3b4c5d',
      outcome: 'overridden',
      overrideReason: {
        reason: { code: 'patient-specific-target', system: 'https://oxygen-order-checker.example.org/fhir/CodeSystem/override-reason', display: 'Agreed' },
        userComment: 'Team agreed 88-92 % for this patient on the ward round',
      },
      outcomeTimestamp: '2026-11-30T09:47:00Z',
    },
  ],
};

const PATHS = [
  '/cds-services/oxygen-order-sign',
  '/cds-services/oxygen-order-select',
  '/cds-services/oxygen-order-sign/feedback',
  '/cds-services',
  '/cds-services/no-such-service',
  '/healthz',
  '/policy',
] as const;

const CONTENT_TYPES = [
  'application/json',
  'application/fhir+json',
  'application/json; charset=utf-8',
  'application/json; charset=utf-16',
  'text/plain',
  'application/x-www-form-urlencoded',
  '',
] as const;

/** Quick failures only: the slow ones are the fault suite's (tests/http/faults.test.ts). */
const QUICK_FAULTS: readonly Fault[] = [
  'status-500', 'status-401', 'junk-json', 'not-fhir-json', 'wrong-type', 'next-self', 'next-new',
  'redirect-other-host', 'reset-mid-body', 'deep-json',
];
const TYPES = ['Patient', 'Observation', 'Condition', 'Encounter', 'MedicationRequest', 'ServiceRequest', 'None'];
const KEYS = ['patient', 'observations', 'conditions', 'encounter', 'medicationRequests', 'serviceRequests'];

function withFhirServer(example: Example, dropped: readonly boolean[], fault: Fault, type: string): Json {
  const body = structuredClone(example.body) as Record<string, Json> & { prefetch: Record<string, Json> };
  KEYS.forEach((key, i) => {
    if (dropped[i] === true) delete body.prefetch[key];
  });
  return { ...body, fhirServer: fhir.baseUrl(fault, type), fhirAuthorization };
}

describe('fuzzed edges', () => {
  it('never give a 5xx for mutated feedback, and every answer keeps its promise', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.constantFrom('oxygen-order-sign', 'oxygen-order-select', 'elsewhere'),
        fc.array(mutation, { minLength: 1, maxLength: 4 }),
        async (serviceId, mutations) => {
          const text = toWire(mutate(feedbackBody, mutations));
          const answer = await post(`${server.url}/cds-services/${serviceId}/feedback`, text);
          calls += 1;
          expect(answerProblems(answer, JSON.parse(text) as Json, false)).toStrictEqual([]);
        },
      ),
      { numRuns: FEEDBACK_RUNS, seed: FUZZ_SEED + 2 },
    );
  }, TIMEOUT_MS);

  it('never give a 5xx for bodies that are barely or not JSON, on any route and media type', async () => {
    const bodies = fc.oneof(
      fc.json({ maxDepth: 4 }),
      fc.string({ unit: 'binary', maxLength: 200 }),
      fc.uint8Array({ maxLength: 200 }),
      garbage.map((value) => JSON.stringify({ hook: 'order-sign', hookInstance: 'x', context: value })),
    );
    await fc.assert(
      fc.asyncProperty(
        fc.constantFrom(...PATHS),
        fc.constantFrom('POST', 'GET', 'PUT', 'DELETE'),
        fc.constantFrom(...CONTENT_TYPES),
        bodies,
        async (path, method, contentType, body) => {
          const answer = await send(`${server.url}${path}`, method, contentType === '' ? {} : { 'Content-Type': contentType }, body);
          calls += 1;
          expect(answerProblems(answer, undefined, false)).toStrictEqual([]);
        },
      ),
      { numRuns: RAW_RUNS, seed: FUZZ_SEED + 3 },
    );
  }, TIMEOUT_MS);

  it('never give a 5xx when the FHIR server the call names fails, mutated or not', async () => {
    await fc.assert(
      fc.asyncProperty(
        fc.constantFrom(...examples),
        fc.array(fc.boolean(), { minLength: KEYS.length, maxLength: KEYS.length }),
        fc.constantFrom(...QUICK_FAULTS),
        fc.constantFrom(...TYPES),
        fc.array(mutation, { maxLength: 2 }),
        async (example, dropped, fault, type, mutations) => {
          now = example.now;
          const text = toWire(mutate(withFhirServer(example, dropped, fault, type), mutations));
          const answer = await post(`${server.url}/cds-services/${example.serviceId}`, text);
          calls += 1;
          expect(answerProblems(answer, JSON.parse(text) as Json, false)).toStrictEqual([]);
        },
      ),
      { numRuns: FALLBACK_RUNS, seed: FUZZ_SEED + 4 },
    );
  }, TIMEOUT_MS);

  describe('edge cases', () => {
    it('ran every case and reached the FHIR server', () => {
      expect(calls).toBe(FEEDBACK_RUNS + RAW_RUNS + FALLBACK_RUNS);
      expect(fhir.requests.length).toBeGreaterThan(FALLBACK_RUNS);
      expect(fhir.redirectTargetRequests).toStrictEqual([]);
    });

    it('wrote no token, patient id, name, birth date or record number to any log line', () => {
      const text = log.text();
      for (const secret of [TOKEN, ...examples.flatMap((example) => example.secrets)]) {
        expect(text.includes(secret), secret).toBe(false);
      }
    });

    it('left no unhandled promise rejection behind', () => {
      expect(rejections).toStrictEqual([]);
    });
  });
});
