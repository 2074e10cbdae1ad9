import { performance } from 'node:perf_hooks';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { incompleteEntry } from '../../src/http/gather-data.js';
import { conformanceProblems } from '../helpers/card-conformance.js';
import type { MemoryLog } from '../log/memory-log.js';
import {
  fhirAuthorization,
  fullPrefetch,
  orderSignRequest,
  PATIENT_FAMILY_NAME,
  PATIENT_ID,
  patient,
  TOKEN,
} from './larkspur-fixtures.js';
import { listenApp, post, type Answer, type AppServer } from './support/app-server.js';
import {
  HUGE_BODY_BYTES,
  startFaultFhirServer,
  type Fault,
  type FaultFhirServer,
  type FaultOn,
} from './support/fault-fhir-server.js';
import { buildTestApp } from './test-app.js';

/**
 * The FHIR fallback against a server that fails in every way the fault server knows. CDS Hooks 2.0
 * §Prefetch Template: required data that cannot be had means 412; optional data that cannot be had
 * is named and the call goes on; §Providing FHIR Resources: answer "on the order of 500 ms", so the
 * fallback is time-boxed. Budgets are set small here; the slack is generous (a loaded 2-core machine)
 * and still far below the slow server's delay, so a call that waited for it fails the bound.
 */

const LIMITS = { callTimeoutMs: 200, budgetMs: 400, maxResponseBytes: 262_144, maxPages: 3 };
const SLACK_MS = 2500;
const SLOW_MS = 8000; // longer than budget + slack: waiting for the slow server fails the bound
const SERVICE = '/cds-services/oxygen-order-sign';
const PARTIAL_SUMMARY = 'Check was partial: 1 data source(s) could not be retrieved'; // cards/required-data-unavailable.yaml

/** What gather-key.ts says of each failure, after "was not prefetched, and ". */
const REASONS: readonly (readonly [Fault, string])[] = [
  ['slow', 'the FHIR server did not answer in time'],
  ['hang', 'the FHIR server did not answer in time'],
  ['status-500', 'the FHIR server answered with an error status (HTTP 500)'],
  ['status-401', 'the FHIR server answered with an error status (HTTP 401)'],
  ['junk-json', 'the FHIR server response was not JSON'],
  ['not-fhir-json', 'the FHIR server response was not a FHIR resource'],
  ['wrong-type', 'the FHIR server answer was unusable: it holds no Observation'],
  ['huge-body', 'the FHIR server response was larger than the size limit'],
  ['huge-declared', 'the FHIR server response was larger than the size limit'],
  ['redirect-other-host', 'the FHIR server answered with a redirect, which is not followed (HTTP 302)'],
  ['reset-mid-body', 'the FHIR server connection broke off during the answer'],
  ['deep-json', 'the FHIR server response nested too deeply or held too long a list or text'],
];

let fhir: FaultFhirServer;
let server: AppServer;
let log: MemoryLog;
let baselineSummaries: string[];
const rejections: unknown[] = [];
const onRejection = (reason: unknown): void => {
  rejections.push(reason);
};

/** An order-sign call that leaves `dropped` keys to be read from the fault server. */
function callWithFault(fault: Fault, type: string, dropped: readonly string[], on: FaultOn = 'first') {
  const prefetch: Record<string, unknown> = structuredClone(fullPrefetch);
  for (const key of dropped) delete prefetch[key];
  return orderSignRequest({ prefetch, fhirServer: fhir.baseUrl(fault, type, on), fhirAuthorization });
}

async function timedPost(body: unknown): Promise<{ answer: Answer; elapsedMs: number }> {
  const started = performance.now();
  const answer = await post(`${server.url}${SERVICE}`, body);
  return { answer, elapsedMs: performance.now() - started };
}

function summaries(answer: Answer): string[] {
  return ((answer.body as { cards?: { summary: string }[] }).cards ?? []).map((card) => card.summary).sort();
}

function partialCardDetail(answer: Answer): string | undefined {
  const cards = (answer.body as { cards?: { summary: string; detail?: string }[] }).cards ?? [];
  return cards.find((card) => card.summary === PARTIAL_SUMMARY)?.detail;
}

/** The process stays healthy: the next ordinary call answers as ever. */
async function expectHealthy(): Promise<void> {
  const { answer } = await timedPost(orderSignRequest());
  expect(answer.status).toBe(200);
  expect(summaries(answer)).toStrictEqual(baselineSummaries);
}

beforeAll(async () => {
  process.on('unhandledRejection', onRejection);
  fhir = await startFaultFhirServer({ slowMs: SLOW_MS });
  const built = await buildTestApp({}, { fhir: LIMITS });
  log = built.log;
  server = await listenApp(built.app);
  const baseline = await post(`${server.url}${SERVICE}`, orderSignRequest());
  baselineSummaries = summaries(baseline);
});

afterAll(async () => {
  process.off('unhandledRejection', onRejection);
  await server.close();
  await fhir.close();
});

describe('hook calls against a failing FHIR server', () => {
  it('gives cards without a fault, the baseline the cases below compare with', () => {
    expect(baselineSummaries.length).toBeGreaterThan(0);
    expect(baselineSummaries).not.toContain(PARTIAL_SUMMARY);
  });

  describe('a required key (observations) the server fails to give', () => {
    it.each(REASONS)('answers 412 naming the key when the server fails with %s', async (fault, reason) => {
      const { answer, elapsedMs } = await timedPost(callWithFault(fault, 'Observation', ['observations']));
      expect(elapsedMs).toBeLessThan(LIMITS.budgetMs + SLACK_MS);
      // CDS Hooks 2.0 §Prefetch Template: 412; CDS Hooks 3.0 ballot: an OperationOutcome body
      expect(answer.status).toBe(412);
      expect(answer.headers.get('content-type')).toBe('application/fhir+json; charset=utf-8');
      expect(answer.body).toStrictEqual({
        resourceType: 'OperationOutcome',
        issue: [
          {
            severity: 'error',
            code: 'processing',
            details: {
              coding: [{ system: 'https://oxygen-order-checker.example.org/fhir/CodeSystem/error-code', code: 'CDS_ERR_PREFETCH_UNAVAILABLE' }],
              text: 'Required FHIR data was neither prefetched nor obtainable from the FHIR server.',
            },
            diagnostics: `Prefetch key 'observations': was not prefetched, and ${reason}`,
          },
        ],
      });
      await expectHealthy();
    });
  });

  describe('an optional key (serviceRequests) the server fails to give', () => {
    // Orders on record feed only the duplicate-order check, so their absence raises no partial-check
    // card (rule required-data-unavailable: only data that could change a finding; common practice).
    it.each(REASONS)('answers 200 with the other cards and no partial-check card for %s', async (fault) => {
      const { answer, elapsedMs } = await timedPost(
        callWithFault(fault, 'ServiceRequest', ['serviceRequests', 'medicationRequests']),
      );
      expect(elapsedMs).toBeLessThan(LIMITS.budgetMs + SLACK_MS);
      expect(answer.status).toBe(200);
      expect(conformanceProblems(answer.body)).toStrictEqual([]);
      // The medication orders came from the same server without fault; only serviceRequests is missing.
      expect(summaries(answer)).toStrictEqual(baselineSummaries);
      expect(partialCardDetail(answer)).toBeUndefined();
      await expectHealthy();
    });
  });

  describe('a next page the server fails to give', () => {
    it.each(REASONS)('answers 200 from the first page, naming the key incomplete, for %s', async (fault) => {
      const { answer, elapsedMs } = await timedPost(callWithFault(fault, 'Observation', ['observations'], 'next-page'));
      expect(elapsedMs).toBeLessThan(LIMITS.budgetMs + SLACK_MS);
      expect(answer.status).toBe(200);
      expect(conformanceProblems(answer.body)).toStrictEqual([]);
      // Page 1 holds every observation of the baseline, so every baseline card is still there.
      expect(summaries(answer)).toStrictEqual([...baselineSummaries, PARTIAL_SUMMARY].sort());
      expect(partialCardDetail(answer)).toContain(`Could not be retrieved: ${incompleteEntry('observations')}.`);
      await expectHealthy();
    });
  });

  describe('pagination that never ends', () => {
    it('reads a next link pointing back at its own page once and names the key incomplete', async () => {
      const before = fhir.requests.length;
      const { answer, elapsedMs } = await timedPost(callWithFault('next-self', 'Observation', ['observations']));
      expect(elapsedMs).toBeLessThan(LIMITS.budgetMs + SLACK_MS);
      expect(answer.status).toBe(200);
      expect(conformanceProblems(answer.body)).toStrictEqual([]);
      const observationReads = fhir.requests.slice(before).filter((r) => r.url.includes('/fhir/Observation'));
      expect(observationReads).toHaveLength(1); // loop detection by URL (gather-pages.ts)
      expect(partialCardDetail(answer)).toContain(incompleteEntry('observations'));
      await expectHealthy();
    });

    it('follows ever-new pages only up to the page cap and names the key incomplete', async () => {
      const before = fhir.requests.length;
      const { answer, elapsedMs } = await timedPost(callWithFault('next-new', 'Observation', ['observations']));
      expect(elapsedMs).toBeLessThan(LIMITS.budgetMs + SLACK_MS);
      expect(answer.status).toBe(200);
      expect(conformanceProblems(answer.body)).toStrictEqual([]);
      const observationReads = fhir.requests.slice(before).filter((r) => r.url.includes('/fhir/Observation'));
      expect(observationReads).toHaveLength(LIMITS.maxPages);
      expect(partialCardDetail(answer)).toContain(incompleteEntry('observations'));
      await expectHealthy();
    });
  });

  describe('edge cases', () => {
    it('stops reading a 50 MB body at the size cap instead of buffering it', async () => {
      const before = fhir.hugeBytesSent();
      const { answer } = await timedPost(callWithFault('huge-body', 'Observation', ['observations']));
      expect(answer.status).toBe(412);
      // What got onto the wire before the client hung up: the cap plus socket buffers, far from 50 MB.
      expect(fhir.hugeBytesSent() - before).toBeLessThan(HUGE_BODY_BYTES / 4);
    });

    it('never sends the token to the host a redirect points at', async () => {
      await timedPost(callWithFault('redirect-other-host', 'Observation', ['observations']));
      expect(fhir.redirectTargetRequests).toStrictEqual([]);
    });

    it('sends the token to the named FHIR server only, as a bearer header', () => {
      // CDS Hooks 2.0 §FHIR Resource Access: Authorization: Bearer {access_token}
      const authorizations = new Set(fhir.requests.map((r) => r.headers.authorization));
      expect([...authorizations]).toStrictEqual([`Bearer ${TOKEN}`]);
    });

    it('keeps the token, the patient id and the name out of every log line', () => {
      const text = log.text();
      expect(log.lines().length).toBeGreaterThan(70);
      for (const secret of [TOKEN, PATIENT_ID, PATIENT_FAMILY_NAME, 'Edwin', patient.birthDate, 'LB-MRN-880417']) {
        expect(text).not.toContain(secret);
      }
    });

    it('leaves no unhandled promise rejection behind', () => {
      expect(rejections).toStrictEqual([]);
    });
  });
});
