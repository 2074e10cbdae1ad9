import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest';
import { discoveryResponse, PREFETCH_KEYS } from '../../src/cds/services.js';
import { createGatherer } from '../../src/http/gather-data.js';
import {
  context,
  copd,
  encounter,
  fhirAuthorization,
  fullPrefetch,
  paco2,
  patient,
  ph,
  PATIENT_ID,
  respRate,
  searchset,
  spo2,
  TOKEN,
} from './larkspur-fixtures.js';
import { startFhirServer, type FhirTestServer } from './fhir-test-server.js';

const templates = discoveryResponse().services[0]?.prefetch ?? {};
const limits = { callTimeoutMs: 1000, budgetMs: 2000, maxResponseBytes: 1_048_576, maxPages: 5 };
const gather = createGatherer({ fetch: globalThis.fetch, limits });

/** The path and query the service should ask for, from the key's discovery template. */
function expectedPath(key: keyof typeof PREFETCH_KEYS): string {
  return `/fhir/${PREFETCH_KEYS[key].template
    .replace('{{context.patientId}}', PATIENT_ID)
    .replace('{{context.encounterId}}', context.encounterId)}`;
}

let fhir: FhirTestServer;
let elsewhere: FhirTestServer;
/** Per-test switch: how the server answers Condition searches. */
let conditionReply: 'ok' | 'slow' | 'error' = 'ok';

beforeAll(async () => {
  elsewhere = await startFhirServer(() => ({ status: 200, body: searchset([]) }));
  fhir = await startFhirServer((request, origin) => {
    const url = new URL(request.url, origin);
    const path = url.pathname.replace(/^\/fhir\//, '');
    if (path === `Patient/${PATIENT_ID}`) return { status: 200, body: patient };
    if (path === `Encounter/${context.encounterId}`) return { status: 200, body: encounter };
    if (path === 'Observation' && url.searchParams.get('page') === '2') {
      return { status: 200, body: searchset([respRate, paco2]) };
    }
    if (path === 'Observation' && url.searchParams.get('page') === 'elsewhere') {
      return { status: 200, body: searchset([respRate], [{ relation: 'next', url: `${elsewhere.baseUrl}/Observation` }]) };
    }
    if (path === 'Observation' && url.searchParams.get('page') === 'loop') {
      // Ever-new pages: a next link to a page already read would stop the walk at once (gather-pages.ts).
      const n = Number(url.searchParams.get('n') ?? '1') + 1;
      return { status: 200, body: searchset([respRate], [{ relation: 'next', url: `${origin}/fhir/Observation?page=loop&n=${n}` }]) };
    }
    if (path === 'Observation') {
      return { status: 200, body: searchset([spo2], [{ relation: 'next', url: `${origin}/fhir/Observation?page=2` }]) };
    }
    if (path === 'Condition') {
      if (conditionReply === 'slow') return { status: 200, body: searchset([copd]), delayMs: 3000 };
      if (conditionReply === 'error') return { status: 503, body: { resourceType: 'OperationOutcome', issue: [] } };
      return { status: 200, body: searchset([copd]) };
    }
    if (path === 'MedicationRequest' || path === 'ServiceRequest') return { status: 200, body: searchset([]) };
    return { status: 404, body: { resourceType: 'OperationOutcome', issue: [] } };
  });
});

afterAll(async () => {
  await fhir.close();
  await elsewhere.close();
});

beforeEach(() => {
  fhir.requests.length = 0;
  elsewhere.requests.length = 0;
  conditionReply = 'ok';
});

function withServer(prefetch: Record<string, unknown> | undefined) {
  return {
    fhirServer: fhir.baseUrl,
    fhirAuthorization,
    context,
    ...(prefetch === undefined ? {} : { prefetch }),
  };
}

describe('createGatherer', () => {
  it('uses complete prefetch without any FHIR call', async () => {
    const outcome = await gather(withServer(fullPrefetch), templates);
    // CDS Hooks 2.0 §Prefetch Template: prefetch complete, nothing to fetch
    expect(outcome).toStrictEqual({
      kind: 'gathered',
      data: {
        patient,
        encounter,
        observations: [spo2, respRate, paco2, ph],
        conditions: [copd],
        activeOrders: [],
        missing: [],
      },
      fallback: { used: false, keysFetched: [], keysFailed: [], keysIncomplete: [] },
    });
    expect(fhir.requests).toStrictEqual([]);
  });

  it('fetches every key when nothing was prefetched, with the token, following next pages', async () => {
    const outcome = await gather(withServer(undefined), templates);
    expect(outcome.kind).toBe('gathered');
    if (outcome.kind !== 'gathered') return;
    expect(outcome.data.patient).toStrictEqual(patient);
    expect(outcome.data.observations).toStrictEqual([spo2, respRate, paco2]);
    expect(outcome.data.conditions).toStrictEqual([copd]);
    expect(outcome.data.encounter).toStrictEqual(encounter);
    expect(outcome.fallback).toStrictEqual({
      used: true,
      keysFetched: ['patient', 'observations', 'conditions', 'encounter', 'medicationRequests', 'serviceRequests'],
      keysFailed: [],
      keysIncomplete: [],
    });
    // CDS Hooks 2.0 §FHIR Resource Access: Authorization: Bearer <access_token> on every call
    expect(fhir.requests.map((r) => r.headers.authorization)).toStrictEqual(
      fhir.requests.map(() => `Bearer ${TOKEN}`),
    );
    expect(fhir.requests.map((r) => r.url).sort()).toStrictEqual(
      [
        expectedPath('patient'),
        expectedPath('observations'),
        '/fhir/Observation?page=2',
        expectedPath('conditions'),
        expectedPath('encounter'),
        expectedPath('medicationRequests'),
        expectedPath('serviceRequests'),
      ].sort(),
    );
  });

  it('fetches only the keys prefetch left absent', async () => {
    const { conditions: _dropped, ...prefetch } = fullPrefetch;
    const outcome = await gather(withServer(prefetch), templates);
    expect(outcome.kind).toBe('gathered');
    expect(fhir.requests.map((r) => r.url)).toStrictEqual([expectedPath('conditions')]);
  });

  it('treats null as found-nothing and does not fetch it', async () => {
    const outcome = await gather(withServer({ ...fullPrefetch, conditions: null }), templates);
    expect(outcome.kind === 'gathered' && outcome.data.conditions).toStrictEqual([]);
    expect(outcome.kind === 'gathered' && outcome.data.missing).toStrictEqual([]);
    expect(fhir.requests).toStrictEqual([]);
  });

  it('falls back to a fetch when prefetch holds an OperationOutcome', async () => {
    const failed = { resourceType: 'OperationOutcome', issue: [{ severity: 'error', code: 'timeout' }] };
    const outcome = await gather(withServer({ ...fullPrefetch, conditions: failed }), templates);
    expect(outcome.kind === 'gathered' && outcome.data.conditions).toStrictEqual([copd]);
    expect(fhir.requests.map((r) => r.url)).toStrictEqual([expectedPath('conditions')]);
  });

  it('follows a prefetched Bundle next link on the FHIR server', async () => {
    const firstPage = searchset([spo2], [{ relation: 'next', url: `${fhir.baseUrl}/Observation?page=2` }]);
    const outcome = await gather(withServer({ ...fullPrefetch, observations: firstPage }), templates);
    expect(outcome.kind === 'gathered' && outcome.data.observations).toStrictEqual([spo2, respRate, paco2]);
    expect(fhir.requests.map((r) => [r.url, r.headers.authorization])).toStrictEqual([
      ['/fhir/Observation?page=2', `Bearer ${TOKEN}`],
    ]);
  });

  it('names every required key it cannot have when there is no FHIR server access', async () => {
    const outcome = await gather({ context, prefetch: { encounter } }, templates);
    const reason =
      'was not prefetched, and the request gave no FHIR server access (fhirServer with fhirAuthorization)';
    // CDS Hooks 2.0 §Prefetch Template: required data unobtainable -> 412
    expect(outcome).toStrictEqual({
      kind: 'unavailable',
      unavailable: [
        { key: 'patient', reason },
        { key: 'observations', reason },
        { key: 'conditions', reason },
      ],
      fallback: { used: false, keysFetched: [], keysFailed: [], keysIncomplete: [] },
    });
  });

  it('goes on without optional keys it cannot have, naming them in missing', async () => {
    const { medicationRequests: _m, serviceRequests: _s, ...prefetch } = fullPrefetch;
    const outcome = await gather({ context, prefetch }, templates);
    expect(outcome.kind === 'gathered' && outcome.data.missing).toStrictEqual([
      'medicationRequests',
      'serviceRequests',
    ]);
  });

  describe('edge cases', () => {
    it('does not call the FHIR server when fhirAuthorization is absent', async () => {
      // CDS Hooks 2.0 §FHIR Resource Access: query only with both fhirServer and fhirAuthorization
      const outcome = await gather({ fhirServer: fhir.baseUrl, context, prefetch: {} }, templates);
      expect(outcome.kind).toBe('unavailable');
      expect(fhir.requests).toStrictEqual([]);
    });

    it('gives up on a slow server within the per-call timeout and names the key', async () => {
      conditionReply = 'slow';
      const quick = createGatherer({ fetch: globalThis.fetch, limits: { ...limits, callTimeoutMs: 150 } });
      const { conditions: _dropped, ...prefetch } = fullPrefetch;
      const outcome = await quick(withServer(prefetch), templates);
      expect(outcome).toStrictEqual({
        kind: 'unavailable',
        unavailable: [
          { key: 'conditions', reason: 'was not prefetched, and the FHIR server did not answer in time' },
        ],
        fallback: { used: true, keysFetched: [], keysFailed: ['conditions'], keysIncomplete: [] },
      });
    });

    it('stops at the overall budget even when each call is within its own timeout', async () => {
      conditionReply = 'slow';
      const tight = createGatherer({
        fetch: globalThis.fetch,
        limits: { ...limits, callTimeoutMs: 5000, budgetMs: 200 },
      });
      const { conditions: _dropped, ...prefetch } = fullPrefetch;
      const outcome = await tight(withServer(prefetch), templates);
      expect(outcome.kind === 'unavailable' && outcome.unavailable).toStrictEqual([
        { key: 'conditions', reason: 'was not prefetched, and the FHIR server did not answer in time' },
      ]);
    });

    it('names the HTTP status when the server fails', async () => {
      conditionReply = 'error';
      const { conditions: _dropped, ...prefetch } = fullPrefetch;
      const outcome = await gather(withServer(prefetch), templates);
      expect(outcome.kind === 'unavailable' && outcome.unavailable).toStrictEqual([
        {
          key: 'conditions',
          reason: 'was not prefetched, and the FHIR server answered with an error status (HTTP 503)',
        },
      ]);
    });

    it('does not follow a next link to another host, keeping the pages it has', async () => {
      const firstPage = searchset([spo2], [{ relation: 'next', url: `${fhir.baseUrl}/Observation?page=elsewhere` }]);
      const outcome = await gather(withServer({ ...fullPrefetch, observations: firstPage }), templates);
      expect(outcome.kind === 'gathered' && outcome.data.observations).toStrictEqual([spo2, respRate]);
      expect(outcome.kind === 'gathered' && outcome.fallback.keysIncomplete).toStrictEqual(['observations']);
      expect(elsewhere.requests).toStrictEqual([]);
    });

    it('follows at most maxPages pages in all', async () => {
      const firstPage = searchset([spo2], [{ relation: 'next', url: `${fhir.baseUrl}/Observation?page=loop` }]);
      const outcome = await gather(withServer({ ...fullPrefetch, observations: firstPage }), templates);
      expect(fhir.requests).toHaveLength(limits.maxPages - 1);
      expect(outcome.kind === 'gathered' && outcome.data.observations).toHaveLength(limits.maxPages);
      expect(outcome.kind === 'gathered' && outcome.fallback.keysIncomplete).toStrictEqual(['observations']);
    });

    it('uses the first page alone when there is no server to ask for the next', async () => {
      const firstPage = searchset([spo2], [{ relation: 'next', url: 'https://fhir.larkspur-bay.example/r4/Observation?page=2' }]);
      const outcome = await gather({ context, prefetch: { ...fullPrefetch, observations: firstPage } }, templates);
      expect(outcome.kind === 'gathered' && outcome.data.observations).toStrictEqual([spo2]);
      expect(outcome.kind === 'gathered' && outcome.fallback.keysIncomplete).toStrictEqual(['observations']);
    });

    it('neither fetches nor misses the encounter when the context has no encounterId', async () => {
      const { encounterId: _none, ...noEncounter } = context;
      const { encounter: _dropped, ...prefetch } = fullPrefetch;
      const outcome = await gather({ ...withServer(prefetch), context: noEncounter }, templates);
      expect(outcome.kind === 'gathered' && outcome.data.encounter).toBeUndefined();
      expect(outcome.kind === 'gathered' && outcome.data.missing).toStrictEqual([]);
      expect(fhir.requests).toStrictEqual([]);
    });

    it('keeps only the resource type each key is for', async () => {
      const mixed = searchset([spo2, patient, copd]);
      const outcome = await gather(withServer({ ...fullPrefetch, observations: mixed }), templates);
      expect(outcome.kind === 'gathered' && outcome.data.observations).toStrictEqual([spo2]);
    });

    it("refuses a prefetched Patient that is another patient's and reads the right one", async () => {
      const stranger = { ...patient, id: 'lb-pt-0999' };
      const outcome = await gather(withServer({ ...fullPrefetch, patient: stranger }), templates);
      // Wrong-patient data is a safety hazard (docs/safety.md); the read replaces it.
      expect(outcome.kind === 'gathered' && outcome.data.patient).toStrictEqual(patient);
      expect(fhir.requests.map((r) => r.url)).toStrictEqual([expectedPath('patient')]);
    });

    it("answers 412 when observations include another patient's and there is no server to ask", async () => {
      const theirs = { ...spo2, id: 'lb-obs-other', subject: { reference: 'Patient/lb-pt-0999' } };
      const prefetch = { ...fullPrefetch, observations: searchset([spo2, theirs]) };
      const outcome = await gather({ context, prefetch }, templates);
      expect(outcome.kind === 'unavailable' && outcome.unavailable).toStrictEqual([
        {
          key: 'observations',
          reason:
            "was unusable: it holds another patient's data, and the request gave no FHIR server access (fhirServer with fhirAuthorization)",
        },
      ]);
    });

    it('reads a patient key holding no Patient as unusable', async () => {
      const outcome = await gather({ context, prefetch: { ...fullPrefetch, patient: copd } }, templates);
      expect(outcome.kind === 'unavailable' && outcome.unavailable.map((u) => u.reason)).toStrictEqual([
        'was unusable: it holds no Patient, and the request gave no FHIR server access (fhirServer with fhirAuthorization)',
      ]);
    });

    it('reads a 404 on a read as found-nothing', async () => {
      const other = { ...context, patientId: 'lb-pt-9999' };
      const prefetch = { observations: null, conditions: null, encounter: null, medicationRequests: null, serviceRequests: null };
      const outcome = await gather({ ...withServer(prefetch), context: other }, templates);
      expect(outcome.kind === 'gathered' && outcome.data.patient).toBeUndefined();
      expect(outcome.kind === 'gathered' && outcome.fallback.keysFetched).toStrictEqual(['patient']);
    });
  });
});
