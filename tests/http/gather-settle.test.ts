import { describe, expect, it } from 'vitest';
import { PREFETCH_KEYS, type PrefetchKey } from '../../src/cds/services.js';
import { startFallbackDeadline } from '../../src/http/fhir-deadline.js';
import { gatherKey, settleFromPrefetch, type FetchScope, type GatherRequest } from '../../src/http/gather-key.js';
import { MAX_RESOURCES_PER_KEY } from '../../src/http/gather-pages.js';
import { context, copd, encounter, patient, searchset, spo2 } from './larkspur-fixtures.js';

/**
 * A key the prefetch settles is answered without a promise (gather-data.ts); this checks that answer
 * against the general path (`gatherKey`) for every case of CDS Hooks 2.0 §Prefetch Template's five
 * (absent, null, searchset with and without a next page, OperationOutcome, resource), plus values the
 * service refuses (another patient's data, a wrong resource type) and the per-key resource cap.
 */

const otherPatientsCondition = { ...copd, id: 'lb-cond-other', subject: { reference: 'Patient/lb-pt-9999' } };
const manyConditions = Array.from({ length: MAX_RESOURCES_PER_KEY + 1 }, (_, i) => ({ ...copd, id: `lb-cond-${i}` }));

/** Prefetch values, each tried under every key. */
const VALUES: Readonly<Record<string, unknown>> = {
  null: null,
  'empty searchset': searchset([]),
  'searchset of conditions': searchset([copd]),
  'searchset of observations': searchset([spo2]),
  'searchset with a next page': searchset([copd, spo2], [{ relation: 'next', url: 'https://fhir.larkspur.example/fhir/Condition?page=2' }]),
  'searchset past the cap': searchset(manyConditions),
  'another patient': searchset([otherPatientsCondition]),
  'error outcome': { resourceType: 'OperationOutcome', issue: [{ severity: 'error', code: 'timeout' }] },
  'a Patient': patient,
  'an Encounter': encounter,
  'not a resource': { hello: 'world' },
};

function request(key: PrefetchKey, value: unknown, withAccess: boolean, withEncounter: boolean): GatherRequest {
  const ctx = withEncounter ? context : { ...context, encounterId: undefined };
  return {
    context: ctx,
    prefetch: value === ABSENT ? {} : { [key]: value },
    ...(withAccess
      ? { fhirServer: 'https://fhir.larkspur.example/fhir', fhirAuthorization: { access_token: 'lbgh-demo-token-4f9c2e' } }
      : {}),
  };
}
const ABSENT = Symbol('absent');

function refusingScope(): { scope: FetchScope; calls: () => number } {
  let calls = 0;
  const scope: FetchScope = {
    fetch: () => {
      calls += 1;
      return Promise.reject(new Error('the settled path must not fetch'));
    },
    fhirServer: 'https://fhir.larkspur.example/fhir',
    accessToken: 'lbgh-demo-token-4f9c2e',
    deadline: startFallbackDeadline({ budgetMs: 1000 }),
    limits: { callTimeoutMs: 1000, budgetMs: 1000, maxResponseBytes: 1_048_576, maxPages: 3 },
    calls: { count: 0 },
  };
  return { scope, calls: () => calls };
}

const keys = Object.keys(PREFETCH_KEYS) as PrefetchKey[];
const values: [string, unknown][] = [...Object.entries(VALUES), ['absent', ABSENT]];

describe('a key settled by the prefetch alone', () => {
  for (const withAccess of [false, true]) {
    for (const withEncounter of [true, false]) {
      it(`gives gatherKey's own result (${withAccess ? 'with' : 'without'} FHIR access, ${withEncounter ? 'with' : 'without'} an encounter)`, async () => {
        let settledCount = 0;
        let deferredCount = 0;
        for (const key of keys) {
          for (const [, value] of values) {
            const req = request(key, value, withAccess, withEncounter);
            const settled = settleFromPrefetch(key, PREFETCH_KEYS[key].template, req, withAccess);
            if (settled === undefined) {
              // Only a call that may ask the FHIR server leaves a key to it.
              expect(withAccess).toBe(true);
              deferredCount += 1;
              continue;
            }
            settledCount += 1;
            const { scope, calls } = refusingScope();
            try {
              const general = await gatherKey(key, PREFETCH_KEYS[key].template, req, withAccess ? scope : undefined);
              expect(settled).toEqual(general);
            } finally {
              scope.deadline.close();
            }
            expect(calls()).toBe(0);
          }
        }
        // Both paths are exercised: with access an absent or refused value is fetched, and a next page followed.
        expect(settledCount).toBeGreaterThan(0);
        expect(deferredCount > 0).toBe(withAccess);
      });
    }
  }

  it('marks a key whose next page cannot be read incomplete, and keeps at most the cap', () => {
    const paged = settleFromPrefetch('conditions', PREFETCH_KEYS.conditions.template, request('conditions', VALUES['searchset with a next page'], false, true), false);
    expect(paged).toMatchObject({ kind: 'had', incomplete: true, fetched: false });
    const capped = settleFromPrefetch('conditions', PREFETCH_KEYS.conditions.template, request('conditions', VALUES['searchset past the cap'], false, true), false);
    expect(capped?.kind === 'had' && capped.resources.length).toBe(MAX_RESOURCES_PER_KEY);
    expect(capped).toMatchObject({ incomplete: true });
    const whole = settleFromPrefetch('conditions', PREFETCH_KEYS.conditions.template, request('conditions', VALUES['searchset of conditions'], false, true), false);
    expect(whole).toEqual({ kind: 'had', resources: [copd], fetched: false, incomplete: false });
  });
});
