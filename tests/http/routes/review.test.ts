import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { REVIEW_CSP } from '../../../src/http/review-headers.js';
import { elementsWith } from '../../review/support/read-markup.js';
import { accepted, advisory, card, EHR, EMERGENCY, GENEROUS, overridden, WARD_7 } from '../../store/support/fixtures.js';
import { useReviewApps, type ReviewTestApp } from '../support/review-app.js';

// Invented advisories at the fictional Larkspur Bay General Hospital (tests/store/support/fixtures.ts),
// issued on 2026-03-14 (GMT, so local time equals UTC: Summer Time Act 1972).
const RECEIVED = new Date('2026-03-14T11:00:00Z');

async function seed(app: ReviewTestApp): Promise<void> {
  await app.store.recordAdvisories([
    advisory(1, { issuedAt: '2026-03-14T09:00:00.000Z' }),
    advisory(2, { issuedAt: '2026-03-14T09:10:00.000Z', ruleId: 'spo2-below-target', indicator: 'critical', unit: EMERGENCY }),
    advisory(3, { issuedAt: '2026-03-14T09:20:00.000Z' }),
    advisory(4, { issuedAt: '2026-03-13T09:20:00.000Z', unit: EMERGENCY }),
  ]);
  await app.store.recordFeedback(
    EHR,
    [accepted(1, '2026-03-14T09:05:00Z'), overridden(3, '2026-03-14T09:25:00Z', 'patient-specific-target')],
    RECEIVED,
    GENEROUS,
  );
}

const listRows = (text: string): string[] => elementsWith(text, 'data-card-uuid').map((row) => row['data-card-uuid'] ?? '');

describe('GET /review (list page)', () => {
  const build = useReviewApps();

  it('lists the advisories newest first, each row keyed by card uuid', async () => {
    const app = await build();
    await seed(app);
    const res = await request(app.app).get('/review');
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('text/html; charset=utf-8');
    expect(listRows(res.text)).toStrictEqual([card(3), card(2), card(1), card(4)]);
  });

  it.each([
    ['unit', `unit=${encodeURIComponent(EMERGENCY)}`, [2, 4]],
    ['rule', 'rule=spo2-below-target', [2]],
    ['indicator', 'indicator=critical', [2]],
    ['outcome accepted', 'outcome=accepted', [1]],
    ['outcome overridden', 'outcome=overridden', [3]],
    ['outcome none', 'outcome=none', [2, 4]],
    ['window', 'window=24h', [3, 2, 1]],
    ['from/to days', 'from=2026-03-13&to=2026-03-13', [4]],
  ])('filters by %s', async (_name, query, expected) => {
    const app = await build();
    await seed(app);
    const res = await request(app.app).get(`/review?${query}`);
    expect(res.status).toBe(200);
    expect(listRows(res.text)).toStrictEqual(expected.map(card));
  });

  it('pages, with next and previous links that keep the filters', async () => {
    const app = await build();
    await seed(app);
    const first = await request(app.app).get(`/review?unit=${encodeURIComponent(WARD_7)}&pageSize=1`);
    expect(listRows(first.text)).toStrictEqual([card(3)]);
    const next = elementsWith(first.text, 'rel').find((a) => a['id'] === 'page-next')?.['href'] ?? '';
    expect(next).toBe('/review?unit=Ward+7+%28Respiratory%29&amp;pageSize=1&amp;page=2');
    const second = await request(app.app).get(next.replace(/&amp;/g, '&'));
    expect(listRows(second.text)).toStrictEqual([card(1)]);
    expect(second.text).toContain('id="page-prev"');
    expect(second.text).not.toContain('id="page-next"');
  });

  it('answers a bad filter with a 400 page naming the field, and ignores unknown parameters', async () => {
    const app = await build();
    await seed(app);
    const bad = await request(app.app).get('/review?indicator=severe&from=yesterday&colour=blue');
    expect(bad.status).toBe(400);
    expect(elementsWith(bad.text, 'data-field').map((e) => e['data-field'])).toStrictEqual(['indicator', 'from']);
    expect(listRows(bad.text)).toStrictEqual([]);
  });

  it('shows feedback for a card never issued in the flagged section', async () => {
    const app = await build();
    await seed(app);
    await app.store.recordFeedback(EHR, [accepted(99, '2026-03-14T10:00:00Z')], RECEIVED, GENEROUS);
    const res = await request(app.app).get('/review');
    expect(res.text).toContain('id="unmatched-feedback"');
    expect(res.text).toContain(`<code>${card(99)}</code>`);
    // Never counted on a real advisory: the list still shows card 1's own outcome only.
    expect(listRows(res.text)).not.toContain(card(99));
  });
});

describe('GET /review/advisories/{cardUuid} (advisory page)', () => {
  const build = useReviewApps();

  it('shows the advisory with its feedback, the reason in the card file words, and its chart', async () => {
    const app = await build();
    await seed(app);
    const res = await request(app.app).get(`/review/advisories/${card(3)}`);
    expect(res.status).toBe(200);
    expect(res.text).toContain('Individual target agreed by the team (patient-specific-target)'); // cards/spo2-above-target.yaml
    expect(elementsWith(res.text, 'data-spo2-point')).toHaveLength(2);
    expect(elementsWith(res.text, 'data-target-band')[0]?.['data-high']).toBe('92'); // BTS 2017, section 6
    expect(res.text).toContain('14 Mar 2026, 09:20 GMT');
  });

  it('answers an unknown card with a 404 page', async () => {
    const app = await build();
    const res = await request(app.app).get(`/review/advisories/${card(77)}`);
    expect(res.status).toBe(404);
    expect(res.text).toContain('Advisory not found');
  });
});

describe('GET /review/summary', () => {
  const build = useReviewApps();

  it('counts each rule per unit with its override rate', async () => {
    const app = await build();
    await seed(app);
    const res = await request(app.app).get('/review/summary');
    expect(res.status).toBe(200);
    const ward = elementsWith(res.text, 'data-unit').find((r) => r['data-rule-id'] === 'spo2-above-target' && r['data-unit'] === WARD_7);
    expect(ward).toBeDefined();
    // Cards 1 (accepted) and 3 (overridden) on Ward 7: 1 / 2 = 50 %.
    expect(res.text).toMatch(/data-rule-id="spo2-above-target"><td>spo2-above-target<\/td><td class="num" data-col="fired">3<\/td>/);
    expect(res.text).toContain('data-rate="0.5000">50 %');
    expect(elementsWith(res.text, 'data-rule-bar')).toHaveLength(2);
  });

  it('answers a bad window with a 400 page naming it', async () => {
    const app = await build();
    const res = await request(app.app).get('/review/summary?window=fortnight');
    expect(res.status).toBe(400);
    expect(elementsWith(res.text, 'data-field').map((e) => e['data-field'])).toStrictEqual(['window']);
  });
});

describe('GET /review/api/*', () => {
  const build = useReviewApps();

  it('lists advisories as JSON with the same filters and paging', async () => {
    const app = await build();
    await seed(app);
    const res = await request(app.app).get('/review/api/advisories?unit=Ward%207%20(Respiratory)&pageSize=1&page=2');
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ total: 2, page: 2, pageSize: 1, prev: '/review/api/advisories?unit=Ward+7+%28Respiratory%29&pageSize=1' });
    expect(res.body.next).toBeUndefined();
    expect(res.body.items).toHaveLength(1);
    expect(res.body.items[0]).toMatchObject({ cardUuid: card(1), latestOutcome: 'accepted', feedbackCount: 1, url: `/review/advisories/${card(1)}` });
  });

  it.each([
    ['indicator=severe', ['indicator']],
    ['from=2026-13-01', ['from']],
    ['outcome=maybe&page=0', ['outcome', 'page']],
    ['unit=a&unit=b', ['unit']],
  ])('answers %s with 400 naming the field', async (query, fields) => {
    const app = await build();
    const res = await request(app.app).get(`/review/api/advisories?${query}`);
    expect(res.status).toBe(400);
    expect(res.body.code).toBe('CDS_ERR_REVIEW_FILTER_INVALID');
    expect(res.body.issues.map((i: { path: string }) => i.path)).toStrictEqual(fields);
  });

  it('gives one advisory with a feedback array of outcome, override reason and outcome time', async () => {
    const app = await build();
    await seed(app);
    await app.store.recordFeedback(EHR, [accepted(3, '2026-03-14T09:40:00Z')], new Date('2026-03-14T11:30:00Z'), GENEROUS);
    const res = await request(app.app).get(`/review/api/advisories/${card(3)}`);
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ cardUuid: card(3), ruleId: 'spo2-above-target', unit: WARD_7 });
    expect(res.body.feedback).toHaveLength(2);
    expect(res.body.feedback[0]).toMatchObject({
      outcome: 'overridden',
      overrideReason: { system: 'https://oxygen-order-checker.example.org/fhir/CodeSystem/override-reason', code: 'patient-specific-target', display: 'Individual target agreed by the team' },
      outcomeTimestamp: '2026-03-14T09:25:00Z',
    });
    expect(res.body.feedback[1]).toMatchObject({ outcome: 'accepted', outcomeTimestamp: '2026-03-14T09:40:00Z' });
    expect(res.body.feedback[1].overrideReason).toBeUndefined();
  });

  it('answers an unknown card with 404', async () => {
    const app = await build();
    const res = await request(app.app).get(`/review/api/advisories/${card(77)}`);
    expect(res.status).toBe(404);
    expect(res.body).toStrictEqual({ code: 'CDS_ERR_ADVISORY_NOT_FOUND', message: 'No advisory with that card uuid is on record.' });
  });

  it('summarises per rule and per unit, with override rates and reason displays', async () => {
    const app = await build();
    await seed(app);
    const res = await request(app.app).get('/review/api/summary?window=24h');
    expect(res.status).toBe(200);
    expect(res.body.from).toBe('2026-03-13T12:00:00.000Z');
    const above = res.body.rules.find((r: { ruleId: string }) => r.ruleId === 'spo2-above-target');
    // Cards 1 and 3 in the window: one accepted, one overridden.
    expect(above).toMatchObject({ fired: 2, accepted: 1, overridden: 1, noFeedback: 0, overrideRate: 0.5 });
    expect(above.overrideReasons).toStrictEqual([{ code: 'patient-specific-target', count: 1, display: 'Individual target agreed by the team' }]);
    const below = res.body.rules.find((r: { ruleId: string }) => r.ruleId === 'spo2-below-target');
    expect(below.overrideRate).toBeUndefined();
  });
});

describe('headers on every /review response', () => {
  const build = useReviewApps();

  const paths = [
    '/review',
    '/review?indicator=severe',
    '/review/summary',
    `/review/advisories/${card(1)}`,
    `/review/advisories/${card(77)}`,
    '/review/api/advisories',
    '/review/api/advisories?page=x',
    `/review/api/advisories/${card(77)}`,
    '/review/api/summary',
    '/review/no-such-page',
    '/review/api/no-such-call',
  ];

  it.each(paths)('%s carries the strict CSP and no-store, no-referrer, nosniff, and no CORS', async (path) => {
    const app = await build();
    await seed(app);
    const res = await request(app.app).get(path).set('Origin', 'https://elsewhere.example');
    expect(res.headers['content-security-policy']).toBe(REVIEW_CSP);
    expect(res.headers['referrer-policy']).toBe('no-referrer');
    expect(res.headers['cache-control']).toBe('no-store');
    expect(res.headers['x-content-type-options']).toBe('nosniff');
    expect(res.headers['access-control-allow-origin']).toBeUndefined();
  });

  it('carries them on a 403 and on a 500 too', async () => {
    const denied = await build({ mode: 'production', proxyAddresses: [], linkSecret: Buffer.alloc(32, 1) });
    const refused = await request(denied.app).get('/review');
    expect(refused.status).toBe(403);
    expect(refused.headers['content-security-policy']).toBe(REVIEW_CSP);

    const broken = await build();
    await broken.store.close();
    const page = await request(broken.app).get('/review');
    const api = await request(broken.app).get('/review/api/advisories');
    expect(page.status).toBe(500);
    expect(page.text).toContain('quote request id');
    expect(api.status).toBe(500);
    expect(api.body.code).toBe('CDS_ERR_INTERNAL');
    for (const res of [page, api]) {
      expect(res.headers['content-security-policy']).toBe(REVIEW_CSP);
      expect(res.headers['cache-control']).toBe('no-store');
    }
  });

  it('allows the page style sheet by the hash in the CSP, and runs no script', async () => {
    const app = await build();
    const res = await request(app.app).get('/review');
    const style = /<style>([\s\S]*?)<\/style>/.exec(res.text)?.[1] ?? '';
    const { createHash } = await import('node:crypto');
    expect(REVIEW_CSP).toContain(`'sha256-${createHash('sha256').update(style).digest('base64')}'`);
    expect(res.text).not.toMatch(/<script|\son[a-z]+=/i);
  });
});
