import type { Request } from 'express';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import type { Card } from '../../../src/cds/schemas.js';
import { DEMO_CLIENT, type Authenticate } from '../../../src/http/auth.js';
import type { Store } from '../../../src/store/store.js';
import { openTempStore } from '../../helpers/temp-store.js';
import { loadExamples } from '../support/fuzz-requests.js';
import { buildTestApp } from '../test-app.js';

const FEEDBACK = '/cds-services/oxygen-order-sign/feedback';
const example = loadExamples().find((e) => e.file === 'order-sign-pneumonia-above-target.json');
if (example === undefined) throw new Error('example missing');
const NOW = example.now;
// An invented card id this service never issued.
const STRANGER = '0a7c0cf8-4f5c-5c7e-9d51-6f1e0b3c2a11';
const COMMENT = 'Respiratory team agreed 92-96 % for Mr Harrowgate this morning';

/** Two invented trusted clients, told apart by a test header (the authentication seam, auth.ts). */
const WARDS = 'https://ehr.larkspur-bay.example';
const THEATRES = 'https://theatres.larkspur-bay.example';
const twoClients: Authenticate = (req: Request) =>
  Promise.resolve({ ...DEMO_CLIENT, client: 'test', iss: req.headers['x-test-client'] === 'theatres' ? THEATRES : WARDS });

interface Issued {
  readonly app: Awaited<ReturnType<typeof buildTestApp>>['app'];
  readonly log: Awaited<ReturnType<typeof buildTestApp>>['log'];
  readonly store: Store;
  readonly card: Card;
}

/** An app with a fresh store, and one real card it issued to the wards client. */
async function issueCard(config: { maxItemsPerRequest?: number; maxRecordsPerClientPerDay?: number } = {}): Promise<Issued> {
  const { store } = openTempStore();
  const { app, log } = await buildTestApp(
    { store, clock: () => NOW, authenticate: twoClients },
    {
      feedback: {
        // project defaults (src/config/env-config.ts ENV_DEFAULTS) unless a test narrows them
        maxItemsPerRequest: config.maxItemsPerRequest ?? 50,
        maxRecordsPerClientPerDay: config.maxRecordsPerClientPerDay ?? 20_000,
      },
    },
  );
  const response = await request(app).post('/cds-services/oxygen-order-sign').send(example?.body);
  const card = (response.body as { cards: Card[] }).cards.find((c) => c.suggestions !== undefined);
  if (card === undefined) throw new Error('expected a card with a suggestion');
  return { app, log, store, card };
}

function accepted(card: Card, at = '2026-11-30T10:01:12Z'): Record<string, unknown> {
  return {
    card: card.uuid,
    outcome: 'accepted',
    acceptedSuggestions: [{ id: card.suggestions?.[0]?.uuid }],
    outcomeTimestamp: at,
  };
}

function overridden(cardUuid: string | undefined, at = '2026-11-30T10:02:40Z'): Record<string, unknown> {
  return {
    card: cardUuid,
    outcome: 'overridden',
    overrideReason: {
      reason: { code: 'patient-specific-target', system: 'https://oxygen-order-checker.example.org/fhir/CodeSystem/override-reason' },
      userComment: COMMENT,
    },
    outcomeTimestamp: at,
  };
}

describe('POST /cds-services/{id}/feedback', () => {
  it('commits an accepted suggestion on a card it issued to this client before answering 200', async () => {
    const { app, store, card } = await issueCard();
    const response = await request(app).post(FEEDBACK).send({ feedback: [accepted(card)] });
    // CDS Hooks 2.0 §Feedback: no response code is specified; 200 once the items are recorded
    expect(response.status).toBe(200);
    expect(response.body).toStrictEqual({ recorded: 1, alreadyRecorded: 0, unknownCards: 0 });
    const advisory = await store.getAdvisory(card.uuid ?? '');
    expect(advisory?.feedback.map((f) => [f.outcome, f.acceptedSuggestionIds, f.knownCard, f.client])).toStrictEqual([
      ['accepted', [card.suggestions?.[0]?.uuid], true, { iss: WARDS }],
    ]);
  });

  it('keeps the override reason code and never the comment, and logs card, rule and client only', async () => {
    const { app, log, store, card } = await issueCard();
    const response = await request(app).post(FEEDBACK).send({ feedback: [overridden(card.uuid)] });
    expect(response.status).toBe(200);
    const advisory = await store.getAdvisory(card.uuid ?? '');
    expect(advisory?.feedback[0]?.overrideReason).toStrictEqual({
      system: 'https://oxygen-order-checker.example.org/fhir/CodeSystem/override-reason',
      code: 'patient-specific-target',
    });
    expect(JSON.stringify(advisory)).not.toContain('Harrowgate');
    expect(log.text()).not.toContain('Harrowgate');
    const line = log.lines().find((l) => l['route'] === 'feedback');
    expect(line?.['clientIss']).toBe(WARDS);
    expect(line?.['feedback']).toStrictEqual([
      {
        cardUuid: card.uuid,
        ruleId: card.source.topic?.code,
        knownCard: true,
        outcome: 'overridden',
        overrideReasonCode: 'patient-specific-target',
        duplicate: false,
      },
    ]);
  });

  it('answers the same feedback sent again as already recorded, and keeps one record', async () => {
    const { app, store, card } = await issueCard();
    await request(app).post(FEEDBACK).send({ feedback: [accepted(card)] });
    const again = await request(app).post(FEEDBACK).send({ feedback: [accepted(card), accepted(card)] });
    // CDS Hooks 2.0 §Feedback: feedback may repeat for the same card; make the handler idempotent
    expect(again.status).toBe(200);
    expect(again.body).toStrictEqual({ recorded: 0, alreadyRecorded: 2, unknownCards: 0 });
    expect((await store.getAdvisory(card.uuid ?? ''))?.feedback).toHaveLength(1);
  });

  it('keeps a changed outcome for the same card as a new record, not swallowed', async () => {
    const { app, store, card } = await issueCard();
    await request(app).post(FEEDBACK).send({ feedback: [accepted(card, '2026-11-30T10:01:12Z')] });
    const changed = await request(app).post(FEEDBACK).send({ feedback: [overridden(card.uuid, '2026-11-30T10:05:00Z')] });
    expect(changed.body).toStrictEqual({ recorded: 1, alreadyRecorded: 0, unknownCards: 0 });
    const feedback = (await store.getAdvisory(card.uuid ?? ''))?.feedback ?? [];
    expect(feedback.map((f) => f.outcome)).toStrictEqual(['accepted', 'overridden']);
  });

  it('keeps and flags feedback for a card it never issued, without touching a real card', async () => {
    const { app, log, store, card } = await issueCard();
    const response = await request(app)
      .post(FEEDBACK)
      .send({ feedback: [overridden(STRANGER), overridden('Mr Harrowgate, bed 4')] });
    expect(response.status).toBe(200);
    expect(response.body).toStrictEqual({ recorded: 2, alreadyRecorded: 0, unknownCards: 2 });
    const unmatched = await store.listUnmatchedFeedback(10, 0);
    expect(unmatched.items.map((f) => [f.cardUuid, f.knownCard]).sort()).toStrictEqual(
      [
        [STRANGER, false],
        ['Mr Harrowgate, bed 4', false],
      ].sort(),
    );
    expect((await store.getAdvisory(card.uuid ?? ''))?.feedback).toStrictEqual([]);
    // a card id this service did not make is not logged as sent
    expect(log.text()).not.toContain('Harrowgate');
    const items = log.lines().find((l) => l['route'] === 'feedback')?.['feedback'] as Record<string, unknown>[];
    expect(items.map((item) => [item['cardUuid'], item['knownCard'], item['ruleId']])).toStrictEqual([
      [STRANGER, false, undefined],
      ['(not a uuid)', false, undefined],
    ]);
  });

  it("counts a card issued to another client as unknown to this one, and leaves that card's feedback alone", async () => {
    const { app, store, card } = await issueCard();
    const response = await request(app).post(FEEDBACK).set('x-test-client', 'theatres').send({ feedback: [accepted(card)] });
    expect(response.body).toStrictEqual({ recorded: 1, alreadyRecorded: 0, unknownCards: 1 });
    expect((await store.getAdvisory(card.uuid ?? ''))?.feedback).toStrictEqual([]);
  });

  describe('limits', () => {
    it('answers more items than the per-request limit with 413 naming the field and the limit, and records none', async () => {
      const { app, store, card } = await issueCard({ maxItemsPerRequest: 3 });
      const items = [0, 1, 2, 3].map((minute) => overridden(card.uuid, `2026-11-30T10:0${minute}:00Z`));
      const response = await request(app).post(FEEDBACK).send({ feedback: items });
      // RFC 9110 §15.5.14: content larger than the server is willing to process
      expect(response.status).toBe(413);
      expect(response.body).toStrictEqual({
        code: 'CDS_ERR_FEEDBACK_TOO_MANY_ITEMS',
        message: 'The feedback request holds more items than this service takes in one request; see issues.',
        issues: [{ path: 'feedback', message: 'holds 4 items; this service takes at most 3 in one request' }],
      });
      expect((await store.getAdvisory(card.uuid ?? ''))?.feedback).toStrictEqual([]);
      const within = await request(app).post(FEEDBACK).send({ feedback: items.slice(0, 3) });
      expect(within.body).toStrictEqual({ recorded: 3, alreadyRecorded: 0, unknownCards: 0 });
    });

    it("answers a client past its daily quota with 429 and Retry-After, records nothing, and leaves another client's feedback working", async () => {
      const { app, store, card } = await issueCard({ maxRecordsPerClientPerDay: 3 });
      const items = [0, 1, 2, 3].map((minute) => overridden(STRANGER, `2026-11-30T10:0${minute}:00Z`));
      const first = await request(app).post(FEEDBACK).send({ feedback: items.slice(0, 2) });
      expect(first.body).toStrictEqual({ recorded: 2, alreadyRecorded: 0, unknownCards: 2 });
      const over = await request(app).post(FEEDBACK).send({ feedback: items.slice(2, 4) });
      // RFC 6585 §4: 429 Too Many Requests, MAY include Retry-After (RFC 9110 §10.2.3, seconds)
      expect(over.status).toBe(429);
      // the quota starts again at the next UTC midnight, 14 h 15 min after 09:45Z (arithmetic)
      expect(NOW.toISOString()).toBe('2026-11-30T09:45:00.000Z');
      expect(over.headers['retry-after']).toBe(String(14 * 3600 + 15 * 60));
      expect(over.body).toStrictEqual({
        code: 'CDS_ERR_FEEDBACK_QUOTA_EXCEEDED',
        message:
          'This client has sent as much feedback today as this service keeps for it; nothing was recorded. Retry after the Retry-After delay.',
        issues: [
          {
            path: 'feedback',
            message: "this client's limit of 3 feedback records a day (UTC) would be exceeded; nothing was recorded",
          },
        ],
      });
      expect((await store.listUnmatchedFeedback(10, 0)).total).toBe(2);
      // repeats add nothing, so they are still answered
      const repeat = await request(app).post(FEEDBACK).send({ feedback: items.slice(0, 2) });
      expect(repeat.body).toStrictEqual({ recorded: 0, alreadyRecorded: 2, unknownCards: 2 });
      const other = await request(app).post(FEEDBACK).set('x-test-client', 'theatres').send({ feedback: items.slice(0, 3) });
      expect(other.status).toBe(200);
      expect(other.body).toStrictEqual({ recorded: 3, alreadyRecorded: 0, unknownCards: 3 });
      // the refused request left nothing on the wards client's real card
      expect((await store.getAdvisory(card.uuid ?? ''))?.feedback).toStrictEqual([]);
    });
  });

  describe('edge cases', () => {
    it('answers 503 and logs the failure when the store cannot commit, never a 200', async () => {
      const { store: real } = openTempStore();
      const failing: Store = { ...real, recordFeedback: () => Promise.reject(new Error(`locked: ${COMMENT}`)) };
      const { app, log } = await buildTestApp({ store: failing });
      const response = await request(app).post(FEEDBACK).send({ feedback: [overridden(STRANGER)] });
      expect(response.status).toBe(503);
      expect(response.body).toStrictEqual({
        code: 'CDS_ERR_STORE_UNAVAILABLE',
        message: 'The service could not use its store, so the request was not accepted; retry later.',
      });
      expect(log.lines().some((l) => l['feedback'] === 'write-failed' && l['level'] === 50)).toBe(true);
      expect(log.text()).not.toContain('Harrowgate');
    });

    it('answers an outcome outside the spec with 400 naming the field', async () => {
      const { app } = await buildTestApp();
      const response = await request(app)
        .post(FEEDBACK)
        .send({ feedback: [{ ...overridden(STRANGER), outcome: 'ignored' }] });
      // CDS Hooks 2.0 §Feedback: outcome is accepted | overridden (ignored cards send no feedback)
      expect(response.status).toBe(400);
      expect(response.body).toStrictEqual({
        code: 'CDS_ERR_REQUEST_INVALID',
        message: 'The request does not have the shape CDS Hooks 2.0 requires; see issues.',
        issues: [{ path: 'feedback.0.outcome', message: expect.any(String) }],
      });
    });

    it('answers accepted without acceptedSuggestions with 400 naming the field', async () => {
      const { app } = await buildTestApp();
      const response = await request(app)
        .post(FEEDBACK)
        .send({ feedback: [{ card: STRANGER, outcome: 'accepted', outcomeTimestamp: '2026-11-30T10:01:12Z' }] });
      // CDS Hooks 2.0 §Feedback: acceptedSuggestions is REQUIRED when outcome is accepted
      expect(response.status).toBe(400);
      expect((response.body as { issues: { path: string }[] }).issues.map((i) => i.path)).toStrictEqual([
        'feedback.0.acceptedSuggestions',
      ]);
    });

    it('accepts an override with no reason at all', async () => {
      const { app } = await buildTestApp();
      const response = await request(app)
        .post(FEEDBACK)
        .send({ feedback: [{ card: STRANGER, outcome: 'overridden', outcomeTimestamp: '2026-11-30T10:03:00Z' }] });
      // CDS Hooks 2.0 §Overridden guidance: overridden may come with no reason
      expect(response.status).toBe(200);
      expect(response.body).toStrictEqual({ recorded: 1, alreadyRecorded: 0, unknownCards: 1 });
    });

    it('answers feedback for an unknown service with 404', async () => {
      const { app } = await buildTestApp();
      const response = await request(app).post('/cds-services/no-such-service/feedback').send({ feedback: [overridden(STRANGER)] });
      expect(response.status).toBe(404);
      expect(response.body).toStrictEqual({
        code: 'CDS_ERR_SERVICE_NOT_FOUND',
        message: 'No CDS service has that id; GET /cds-services lists them.',
      });
    });

    it('keeps the same card and outcome apart for the two services', async () => {
      const { app } = await buildTestApp();
      await request(app).post(FEEDBACK).send({ feedback: [overridden(STRANGER)] });
      const other = await request(app).post('/cds-services/oxygen-order-select/feedback').send({ feedback: [overridden(STRANGER)] });
      expect(other.body).toStrictEqual({ recorded: 1, alreadyRecorded: 0, unknownCards: 1 });
    });
  });
});
