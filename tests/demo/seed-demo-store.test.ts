import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { OVERRIDE_REASON_SYSTEM } from '../../src/cds/build-card.js';
import { DEMO_CLIENT } from '../../src/http/auth.js';
import { demoCalls, seedDemoStore, type DemoSeedDeps } from '../../src/demo/seed-demo-store.js';
import type { AdvisoryWithFeedback, Store } from '../../src/store/store.js';
import { openTempStore, testPatientKey } from '../helpers/temp-store.js';
import { buildTestApp, loadBundledFiles } from '../http/test-app.js';

/**
 * The demo seed (src/demo): an empty store in demo mode gets the invented Larkspur Bay shift, made of
 * real outputs of the service; a store holding anything is left alone. Production never seeding is
 * checked through startServer in tests/demo/seed-at-start.test.ts.
 */

/** Any start time: the shift is placed in the twelve hours before it. */
const START = new Date('2026-12-04T19:00:00Z');

async function seedDeps(): Promise<DemoSeedDeps> {
  const files = await loadBundledFiles();
  return {
    policy: files.policy,
    templates: files.templates,
    policyContentHash: files.policyContentHash,
    patientKey: testPatientKey,
    feedbackLimits: { maxRecordsPerClientPerDay: 20_000 },
  };
}

/** Every advisory in the store, with its feedback. */
async function everyAdvisory(store: Store): Promise<AdvisoryWithFeedback[]> {
  const page = await store.listAdvisories({ limit: 1000, offset: 0 });
  expect(page.total).toBe(page.items.length);
  const full = await Promise.all(page.items.map((item) => store.getAdvisory(item.cardUuid)));
  return full.flatMap((advisory) => (advisory === undefined ? [] : [advisory]));
}

describe('seeding the demo store', () => {
  it('fills an empty store with advisories across several wards, rules and hooks, all in the shift before start', async () => {
    const { store } = openTempStore();
    const result = await seedDemoStore(store, START, await seedDeps());
    expect(result.kind).toBe('seeded');
    const advisories = await everyAdvisory(store);
    expect(result).toMatchObject({ advisories: advisories.length });
    expect(new Set(advisories.map((a) => a.unit)).size).toBeGreaterThanOrEqual(4);
    expect(new Set(advisories.map((a) => a.ruleId)).size).toBeGreaterThanOrEqual(10);
    expect(new Set(advisories.map((a) => a.hook))).toStrictEqual(new Set(['order-sign', 'order-select', 'patient-view']));
    for (const advisory of advisories) {
      const issued = Date.parse(advisory.issuedAt);
      expect(issued).toBeLessThan(START.getTime());
      expect(issued).toBeGreaterThanOrEqual(START.getTime() - 12 * 3_600_000);
      expect(advisory.client).toStrictEqual({ iss: DEMO_CLIENT.iss });
    }
  });

  it('shows a reviewer patients who spent time above and below target, with their SpO2 over the shift', async () => {
    const { store } = openTempStore();
    await seedDemoStore(store, START, await seedDeps());
    const advisories = await everyAdvisory(store);
    for (const ruleId of ['time-above-target-on-oxygen', 'time-below-target']) {
      const cards = advisories.filter((a) => a.ruleId === ruleId);
      expect(cards.length, ruleId).toBeGreaterThanOrEqual(2);
      for (const card of cards) {
        // a series worth charting: several readings and the target band the card judged against
        expect(card.series.spo2.length).toBeGreaterThanOrEqual(8);
        expect(card.series.target).toBeDefined();
        const { lowPercent, highPercent } = card.series.target ?? { lowPercent: 0, highPercent: 100 };
        const outside = card.series.spo2.filter((p) =>
          ruleId === 'time-above-target-on-oxygen' ? p.spo2Percent > highPercent : p.spo2Percent < lowPercent,
        );
        expect(outside.length, ruleId).toBeGreaterThan(0);
      }
    }
    // the titration round as a reviewer reads it: a step taken, a card declined with a reason, one open
    const titration = advisories.filter((a) => a.hook === 'patient-view');
    const outcomes = new Set(titration.map((a) => a.feedback.at(-1)?.outcome ?? 'none'));
    expect(outcomes).toStrictEqual(new Set(['accepted', 'overridden', 'none']));
    expect(titration.some((a) => a.feedback.some((f) => f.overrideReason !== undefined))).toBe(true);
  });

  it('adds feedback of both outcomes, with reasons the card offers, and leaves some cards unanswered', async () => {
    const deps = await seedDeps();
    const { store } = openTempStore();
    const result = await seedDemoStore(store, START, deps);
    const advisories = await everyAdvisory(store);
    const feedback = advisories.flatMap((a) => a.feedback.map((f) => ({ advisory: a, f })));
    expect(result).toMatchObject({ feedback: feedback.length });
    const accepted = feedback.filter(({ f }) => f.outcome === 'accepted');
    const overridden = feedback.filter(({ f }) => f.outcome === 'overridden');
    expect(accepted.length).toBeGreaterThan(0);
    expect(overridden.length).toBeGreaterThan(0);
    expect(advisories.filter((a) => a.feedback.length === 0).length).toBeGreaterThan(0);
    for (const { advisory, f } of accepted) {
      // CDS Hooks 2.0 §Feedback: an accepted card names the suggestion taken, one the card offered
      expect(f.acceptedSuggestionIds.length).toBe(1);
      expect(advisory.suggestionUuids).toContain(f.acceptedSuggestionIds[0]);
    }
    for (const { advisory, f } of overridden) {
      const offered = (deps.templates.get(advisory.ruleId)?.overrideReasons ?? []).map((reason) => reason.code);
      expect(f.overrideReason?.system).toBe(OVERRIDE_REASON_SYSTEM);
      expect(offered).toContain(f.overrideReason?.code);
    }
    for (const { advisory, f } of feedback) {
      expect(f.knownCard).toBe(true);
      expect(f.serviceId).toBe(advisory.serviceId);
      expect(Date.parse(f.outcomeTimestamp)).toBeGreaterThanOrEqual(Date.parse(advisory.issuedAt));
      expect(Date.parse(f.outcomeTimestamp)).toBeLessThanOrEqual(START.getTime());
    }
  });

  it('leaves a store that already holds an advisory untouched', async () => {
    const deps = await seedDeps();
    const { store } = openTempStore();
    // a store already holding advisories (an earlier shift), then the demo start
    await seedDemoStore(store, new Date('2026-11-01T08:00:00Z'), deps);
    const before = await everyAdvisory(store);
    expect(before.length).toBeGreaterThan(0);
    const again = await seedDemoStore(store, START, deps);
    expect(again).toStrictEqual({ kind: 'store-not-empty' });
    expect(await everyAdvisory(store)).toStrictEqual(before);
  });

  it('is the same store for the same start time', async () => {
    const deps = await seedDeps();
    const first = openTempStore().store;
    const second = openTempStore().store;
    await seedDemoStore(first, START, deps);
    await seedDemoStore(second, START, deps);
    const strip = (list: AdvisoryWithFeedback[]) =>
      list.map(({ feedback, ...advisory }) => ({ advisory, feedback: feedback.map(({ id: _id, ...rest }) => rest) }));
    expect(strip(await everyAdvisory(second))).toStrictEqual(strip(await everyAdvisory(first)));
  });

  it('records only what the hook route itself records for the same calls', async () => {
    const deps = await seedDeps();
    const seeded = openTempStore().store;
    await seedDemoStore(seeded, START, deps);
    // The same requests sent to the service's own hook route, each at its moment of the shift.
    const live = openTempStore().store;
    let clock = START;
    const { app } = await buildTestApp({ store: live, clock: () => clock });
    for (const call of demoCalls(START)) {
      clock = call.issuedAt;
      const answer = await request(app).post(`/cds-services/${call.serviceId}`).send(call.request as object);
      expect(answer.status).toBe(200);
    }
    const fromRoute = await everyAdvisory(live);
    const fromSeed = await everyAdvisory(seeded);
    expect(fromRoute.length).toBe(fromSeed.length);
    const withoutFeedback = (list: AdvisoryWithFeedback[]) => list.map(({ feedback: _f, ...advisory }) => advisory);
    expect(withoutFeedback(fromSeed)).toStrictEqual(withoutFeedback(fromRoute));
  });
});
