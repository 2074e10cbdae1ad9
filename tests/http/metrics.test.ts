import request from 'supertest';
import { describe, expect, it } from 'vitest';
import type { Card } from '../../src/cds/schemas.js';
import { createGatherer, type Gather } from '../../src/http/gather-data.js';
import { createServiceMetrics, measuredStore } from '../../src/http/metrics.js';
import { createPolicyHolder } from '../../src/live-policy/policy-snapshot.js';
import { openTempStore } from '../helpers/temp-store.js';
import { ENCOUNTER_ID, fhirAuthorization, orderSignRequest, PATIENT_ID, TOKEN } from './larkspur-fixtures.js';
import { bundledSnapshot, buildTestApp, TEST_CONFIG } from './test-app.js';

const SERVICE = '/cds-services/oxygen-order-sign';
// Demo mode lets hook calls name loopback FHIR servers only (src/http/auth.ts); the fetch is faked.
const FHIR_SERVER = 'http://127.0.0.1:9/larkspur-fhir/r4';

interface Sample {
  readonly name: string;
  readonly labels: Readonly<Record<string, string>>;
  readonly value: number;
}

/** The samples of a Prometheus text exposition (comment lines skipped). */
function samples(text: string): Sample[] {
  const parsed: Sample[] = [];
  for (const line of text.split('\n')) {
    const match = /^([a-zA-Z_:][a-zA-Z0-9_:]*)(?:\{(.*)\})? (\S+)$/.exec(line);
    if (match === null) {
      continue;
    }
    const labels: Record<string, string> = {};
    for (const pair of (match[2] ?? '').matchAll(/([a-zA-Z_][a-zA-Z0-9_]*)="((?:[^"\\]|\\.)*)"/g)) {
      labels[pair[1] ?? ''] = pair[2] ?? '';
    }
    parsed.push({ name: match[1] ?? '', labels, value: Number(match[3]) });
  }
  return parsed;
}

/** The value of the one sample with this name and these labels (among others), or undefined. */
function valueOf(all: readonly Sample[], name: string, labels: Readonly<Record<string, string>>): number | undefined {
  const found = all.filter(
    (sample) => sample.name === name && Object.entries(labels).every(([key, value]) => sample.labels[key] === value),
  );
  expect(found.length, `${name} ${JSON.stringify(labels)}`).toBeLessThanOrEqual(1);
  return found[0]?.value;
}

async function scrape(app: Parameters<typeof request>[0]): Promise<{ text: string; all: Sample[] }> {
  const response = await request(app).get('/metrics');
  expect(response.status).toBe(200);
  // Prometheus text exposition format 0.0.4 (prom-client's registry content type).
  expect(response.headers['content-type']).toMatch(/^text\/plain; version=0\.0\.4/);
  return { text: response.text, all: samples(response.text) };
}

describe('GET /metrics', () => {
  it('is not served unless the settings turn it on', async () => {
    const { app } = await buildTestApp();
    expect((await request(app).get('/metrics')).status).toBe(404);
  });

  it('counts hook calls by route and status, and cards by the rules and indicators that fired', async () => {
    const { app } = await buildTestApp({}, { metrics: true });
    const cards: Card[] = [];
    for (let i = 0; i < 2; i += 1) {
      const response = await request(app).post(SERVICE).send(orderSignRequest());
      expect(response.status).toBe(200);
      cards.push(...(response.body as { cards: Card[] }).cards);
    }
    expect(cards.length).toBeGreaterThan(0);
    const { all } = await scrape(app);

    // Per CDS service, so the sign, select and view hooks can be watched apart.
    const signed = { route: 'service', status: '200', service: 'oxygen-order-sign' };
    expect(valueOf(all, 'oxygen_checker_http_requests_total', signed)).toBe(2);
    expect(valueOf(all, 'oxygen_checker_http_request_duration_seconds_count', signed)).toBe(2);
    const expected = new Map<string, number>();
    for (const card of cards) {
      const key = `${card.source.topic?.code ?? ''} ${card.indicator}`;
      expected.set(key, (expected.get(key) ?? 0) + 1);
    }
    const counted = new Map(
      all
        .filter((sample) => sample.name === 'oxygen_checker_cards_total')
        .map((sample) => [`${sample.labels['rule_id'] ?? ''} ${sample.labels['indicator'] ?? ''}`, sample.value]),
    );
    expect(counted).toStrictEqual(expected);
  });

  it('names the policy in force by id, version and content hash', async () => {
    const snapshot = await bundledSnapshot();
    const { app } = await buildTestApp({}, { metrics: true });
    const { all } = await scrape(app);
    expect(
      valueOf(all, 'oxygen_checker_policy_info', {
        id: snapshot.policy.id,
        version: snapshot.policy.version,
        hash: snapshot.contentHash,
      }),
    ).toBe(1);
    expect(all.filter((sample) => sample.name === 'oxygen_checker_policy_info')).toHaveLength(1);
  });

  it.each([
    // One slot in all: the second call finds every slot taken (503, overload.ts).
    ['shared-cap', { maxConcurrentEvaluations: 1 }, 503, 'client-share'],
    // Slots to spare, but one per client: the same client's second call is over its share (429, RFC 6585 §4).
    ['client-share', { maxConcurrentEvaluations: 4, maxConcurrentPerClient: 1 }, 429, 'shared-cap'],
  ] as const)('counts a call refused for %s while another holds its slot', async (reason, limits, status, other) => {
    let entered: () => void = () => undefined;
    const inside = new Promise<void>((resolve) => {
      entered = resolve;
    });
    let release: () => void = () => undefined;
    const released = new Promise<void>((resolve) => {
      release = resolve;
    });
    const real = createGatherer({ fetch: globalThis.fetch, limits: TEST_CONFIG.fhir });
    // The first call holds its slot until the test lets it go.
    const gather: Gather = async (...args) => {
      entered();
      await released;
      return real(...args);
    };
    const { app } = await buildTestApp({ gather }, { metrics: true, ...limits });
    const first = request(app).post(SERVICE).send(orderSignRequest()).then((response) => response.status);
    await inside;
    const refused = await request(app).post(SERVICE).send(orderSignRequest());
    expect(refused.status).toBe(status);
    release();
    expect(await first).toBe(200);

    const { all } = await scrape(app);
    expect(valueOf(all, 'oxygen_checker_overload_refusals_total', { reason })).toBe(1);
    expect(valueOf(all, 'oxygen_checker_overload_refusals_total', { reason: other })).toBeUndefined();
    expect(valueOf(all, 'oxygen_checker_http_requests_total', { route: 'service', status: String(status) })).toBe(1);
  });

  it('labels a hook call with its CDS service only when the id is one of ours, so the label stays a fixed set', async () => {
    const { app } = await buildTestApp({}, { metrics: true });
    expect((await request(app).post('/cds-services/lbgh-no-such-service').send(orderSignRequest())).status).toBe(404);
    expect((await request(app).post(SERVICE).send(orderSignRequest())).status).toBe(200);
    const { all } = await scrape(app);
    const services = new Set(all.filter((sample) => sample.name === 'oxygen_checker_http_requests_total').map((sample) => sample.labels['service']));
    expect(services).toStrictEqual(new Set([undefined, 'oxygen-order-sign']));
    expect(valueOf(all, 'oxygen_checker_http_requests_total', { route: 'service', status: '404' })).toBe(1);
    expect(all.some((sample) => JSON.stringify(sample.labels).includes('lbgh-no-such-service'))).toBe(false);
  });

  it('counts FHIR requests by outcome, never by URL', async () => {
    const failing: typeof fetch = () => Promise.resolve(new Response('{}', { status: 500 }));
    const { app } = await buildTestApp({ fetch: failing }, { metrics: true });
    const response = await request(app)
      .post(SERVICE)
      .send(orderSignRequest({ prefetch: {}, fhirServer: FHIR_SERVER, fhirAuthorization }));
    expect(response.status).toBe(412);
    const { text, all } = await scrape(app);
    expect(valueOf(all, 'oxygen_checker_fhir_fetch_failures_total', { outcome: 'http-error' })).toBeGreaterThan(0);
    expect(valueOf(all, 'oxygen_checker_fhir_fetch_duration_seconds_count', { outcome: 'http-error' })).toBeGreaterThan(0);
    expect(text).not.toContain('larkspur-fhir');
  });

  it('carries no patient id, encounter id or token from the requests in any label', async () => {
    const { app } = await buildTestApp({ fetch: () => Promise.reject(new Error(`refused ${TOKEN}`)) }, { metrics: true });
    await request(app).post(SERVICE).send(orderSignRequest());
    await request(app)
      .post(SERVICE)
      .send(orderSignRequest({ prefetch: {}, fhirServer: FHIR_SERVER, fhirAuthorization }));
    await request(app).get(`/cds-services/${PATIENT_ID}`).set('Authorization', `Bearer ${TOKEN}`);
    const { text, all } = await scrape(app);
    expect(valueOf(all, 'oxygen_checker_fhir_fetch_failures_total', { outcome: 'failed' })).toBeGreaterThan(0);
    for (const secret of [PATIENT_ID, ENCOUNTER_ID, TOKEN]) {
      expect(text).not.toContain(secret);
    }
    const labelValues = all.flatMap((sample) => Object.values(sample.labels));
    expect(labelValues.some((value) => value.includes('lb-'))).toBe(false);
  });

  it('shows a reloaded policy on the next scrape', async () => {
    const snapshot = await bundledSnapshot();
    const policy = createPolicyHolder(snapshot);
    const { app } = await buildTestApp({ policy }, { metrics: true });
    const reloadedHash = 'f'.repeat(64);
    policy.replace({ ...snapshot, contentHash: reloadedHash });
    const { all } = await scrape(app);
    const info = all.filter((sample) => sample.name === 'oxygen_checker_policy_info');
    expect(info.map((sample) => sample.labels['hash'])).toStrictEqual([reloadedHash]);
  });
});

describe('the measured store', () => {
  it('counts replay-cache answers by outcome and failed calls by operation', async () => {
    const metrics = createServiceMetrics({ policy: createPolicyHolder(await bundledSnapshot()) });
    const real = openTempStore().store;
    const store = measuredStore(
      { ...real, recordAdvisories: () => Promise.reject(new Error(`disk full while writing ${PATIENT_ID}`)) },
      metrics,
    );
    const now = new Date('2025-03-14T09:00:00Z');
    const expiresAt = now.getTime() + 300_000;
    expect((await store.checkAndRememberJti('client-a', 'jti-1', expiresAt, now, 1)).kind).toBe('fresh');
    expect((await store.checkAndRememberJti('client-a', 'jti-1', expiresAt, now, 1)).kind).toBe('replayed');
    expect((await store.checkAndRememberJti('client-a', 'jti-2', expiresAt, now, 1)).kind).toBe('client-full');
    await expect(store.recordAdvisories([])).rejects.toThrow(/disk full/);

    const all = samples(await metrics.registry.metrics());
    for (const outcome of ['fresh', 'replayed', 'refused']) {
      expect(valueOf(all, 'oxygen_checker_replay_checks_total', { outcome }), outcome).toBe(1);
    }
    expect(valueOf(all, 'oxygen_checker_store_errors_total', { operation: 'recordAdvisories' })).toBe(1);
    expect(valueOf(all, 'oxygen_checker_store_errors_total', { operation: 'checkAndRememberJti' })).toBeUndefined();
  });
});
