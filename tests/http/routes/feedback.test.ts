import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { createMemoryFeedbackStore } from '../../../src/http/feedback-store.js';
import { buildTestApp } from '../test-app.js';

const FEEDBACK = '/cds-services/oxygen-order-sign/feedback';
// Invented card and suggestion ids, as our cards would carry them.
const CARD = '0a7c0cf8-4f5c-5c7e-9d51-6f1e0b3c2a11';
const SUGGESTION = '5e2d9b61-8a3f-5b27-a0c4-91d2e6f7a8b3';

const accepted = {
  card: CARD,
  outcome: 'accepted',
  acceptedSuggestions: [{ id: SUGGESTION }],
  outcomeTimestamp: '2025-03-14T09:01:12Z',
};
const overridden = {
  card: CARD,
  outcome: 'overridden',
  overrideReason: {
    reason: { code: 'patient-specific-target', system: 'urn:oxygen-order-checker:override-reason' },
    userComment: 'Respiratory team agreed 92-96 % for Mr Harrowgate this morning',
  },
  outcomeTimestamp: '2025-03-14T09:02:40Z',
};

describe('POST /cds-services/{id}/feedback', () => {
  it('records an accepted suggestion', async () => {
    const store = createMemoryFeedbackStore();
    const { app } = await buildTestApp({ feedbackStore: store });
    const response = await request(app).post(FEEDBACK).send({ feedback: [accepted] });
    // CDS Hooks 2.0 §Feedback: no response code is specified; 200 as the reference service does
    expect(response.status).toBe(200);
    expect(response.body).toStrictEqual({ recorded: 1, alreadyRecorded: 0 });
    expect(store.entries()).toStrictEqual([
      {
        serviceId: 'oxygen-order-sign',
        card: CARD,
        outcome: 'accepted',
        acceptedSuggestionIds: [SUGGESTION],
        overrideReasonCode: undefined,
        outcomeTimestamp: '2025-03-14T09:01:12Z',
      },
    ]);
  });

  it('records an override with its reason code and keeps no free-text comment', async () => {
    const store = createMemoryFeedbackStore();
    const { app, log } = await buildTestApp({ feedbackStore: store });
    const response = await request(app).post(FEEDBACK).send({ feedback: [overridden] });
    expect(response.status).toBe(200);
    expect(store.entries()[0]?.overrideReasonCode).toBe('patient-specific-target');
    expect(JSON.stringify(store.entries())).not.toContain('Harrowgate');
    expect(log.text()).not.toContain('Harrowgate');
    expect(log.text()).not.toContain(CARD);
    expect(log.lines().find((line) => line['route'] === 'feedback')?.['feedback']).toStrictEqual([
      { outcome: 'overridden', overrideReasonCode: 'patient-specific-target', duplicate: false },
    ]);
  });

  it('accepts an override with no reason at all', async () => {
    const { app } = await buildTestApp();
    const response = await request(app)
      .post(FEEDBACK)
      .send({ feedback: [{ card: CARD, outcome: 'overridden', outcomeTimestamp: '2025-03-14T09:03:00Z' }] });
    // CDS Hooks 2.0 §Overridden guidance: overridden may come with no reason
    expect(response.status).toBe(200);
    expect(response.body).toStrictEqual({ recorded: 1, alreadyRecorded: 0 });
  });

  it('treats the same feedback sent again as already recorded', async () => {
    const store = createMemoryFeedbackStore();
    const { app } = await buildTestApp({ feedbackStore: store });
    await request(app).post(FEEDBACK).send({ feedback: [accepted] });
    const again = await request(app).post(FEEDBACK).send({ feedback: [accepted, overridden] });
    // CDS Hooks 2.0 §Feedback: feedback may repeat for the same card; make the handler idempotent
    expect(again.status).toBe(200);
    expect(again.body).toStrictEqual({ recorded: 1, alreadyRecorded: 1 });
    expect(store.entries().map((entry) => entry.outcome)).toStrictEqual(['accepted', 'overridden']);
  });

  it('answers an outcome outside the spec with 400 naming the field', async () => {
    const { app } = await buildTestApp();
    const response = await request(app)
      .post(FEEDBACK)
      .send({ feedback: [{ ...accepted, outcome: 'ignored' }] });
    // CDS Hooks 2.0 §Feedback: outcome is accepted | overridden (ignored cards send no feedback)
    expect(response.status).toBe(400);
    expect(response.body).toStrictEqual({
      code: 'CDS_ERR_REQUEST_INVALID',
      message: 'The request does not have the shape CDS Hooks 2.0 requires; see issues.',
      issues: [{ path: 'feedback.0.outcome', message: expect.any(String) }],
    });
  });

  describe('edge cases', () => {
    it('answers accepted without acceptedSuggestions with 400 naming the field', async () => {
      const { app } = await buildTestApp();
      const { acceptedSuggestions: _dropped, ...item } = accepted;
      const response = await request(app).post(FEEDBACK).send({ feedback: [item] });
      // CDS Hooks 2.0 §Feedback: acceptedSuggestions is REQUIRED when outcome is accepted
      expect(response.status).toBe(400);
      expect((response.body as { issues: { path: string }[] }).issues.map((i) => i.path)).toStrictEqual([
        'feedback.0.acceptedSuggestions',
      ]);
    });

    it('answers feedback for an unknown service with 404', async () => {
      const { app } = await buildTestApp();
      const response = await request(app).post('/cds-services/no-such-service/feedback').send({ feedback: [accepted] });
      expect(response.status).toBe(404);
      expect(response.body).toStrictEqual({
        code: 'CDS_ERR_SERVICE_NOT_FOUND',
        message: 'No CDS service has that id; GET /cds-services lists them.',
      });
    });

    it('keeps the same card and outcome apart for the two services', async () => {
      const store = createMemoryFeedbackStore();
      const { app } = await buildTestApp({ feedbackStore: store });
      await request(app).post(FEEDBACK).send({ feedback: [accepted] });
      const other = await request(app)
        .post('/cds-services/oxygen-order-select/feedback')
        .send({ feedback: [accepted] });
      expect(other.body).toStrictEqual({ recorded: 1, alreadyRecorded: 0 });
    });
  });
});
