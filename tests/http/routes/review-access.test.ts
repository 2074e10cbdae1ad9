import request from 'supertest';
import { describe, expect, it } from 'vitest';
import type { ReviewAccessConfig } from '../../../src/security/review-access.js';
import { signReviewLinkToken } from '../../../src/security/review-link-token.js';
import { advisory, card } from '../../store/support/fixtures.js';
import { LINK_SECRET, REVIEW_NOW, useReviewApps } from '../support/review-app.js';

// supertest connects from loopback, so 127.0.0.1 plays the hospital's sign-in proxy here.
const AS_PROXY: ReviewAccessConfig = { mode: 'production', identityHeader: 'x-authenticated-user', proxyAddresses: ['127.0.0.1'], linkSecret: LINK_SECRET };
const OTHER_PROXY: ReviewAccessConfig = { ...AS_PROXY, proxyAddresses: ['10.20.0.5'] };
const IN_AN_HOUR_S = REVIEW_NOW.getTime() / 1000 + 3600;

const STAFF_PATHS = ['/review', '/review/summary', '/review/api/advisories', '/review/api/summary'];

describe('review access in production', () => {
  const build = useReviewApps();

  it.each(STAFF_PATHS)('%s opens with the identity header from the configured proxy address', async (path) => {
    const app = await build(AS_PROXY);
    const res = await request(app.app).get(path).set('X-Authenticated-User', 'rt.okafor');
    expect(res.status).toBe(200);
  });

  it.each(STAFF_PATHS)('%s is refused with 403 when the header comes from another address', async (path) => {
    const app = await build(OTHER_PROXY);
    const res = await request(app.app).get(path).set('X-Authenticated-User', 'rt.okafor').set('X-Forwarded-For', '10.20.0.5');
    expect(res.status).toBe(403);
  });

  it.each(STAFF_PATHS)('%s is refused with 403 from the proxy without the header', async (path) => {
    const app = await build(AS_PROXY);
    const res = await request(app.app).get(path);
    expect(res.status).toBe(403);
  });

  it('answers the API refusal as catalogue JSON and the page refusal as a plain page', async () => {
    const app = await build(OTHER_PROXY);
    const api = await request(app.app).get('/review/api/advisories');
    expect(api.body).toStrictEqual({
      code: 'CDS_ERR_REVIEW_ACCESS_DENIED',
      message: 'Open the review pages through the hospital sign-in, or with a current link from the advisory card.',
    });
    const page = await request(app.app).get('/review');
    expect(page.headers['content-type']).toBe('text/html; charset=utf-8');
    expect(page.text).toContain('The review pages open only through the hospital sign-in.');
  });

  it('does not reveal whether an advisory exists to a reader who may not see it', async () => {
    const app = await build(OTHER_PROXY);
    await app.store.recordAdvisories([advisory(1)]);
    const known = await request(app.app).get(`/review/api/advisories/${card(1)}`);
    const unknown = await request(app.app).get(`/review/api/advisories/${card(2)}`);
    expect([known.status, unknown.status]).toStrictEqual([403, 403]);
  });

  describe('link tokens', () => {
    it('open the one advisory page and its JSON, and nothing else', async () => {
      const app = await build(OTHER_PROXY);
      await app.store.recordAdvisories([advisory(1), advisory(2)]);
      const token = signReviewLinkToken(LINK_SECRET, card(1), IN_AN_HOUR_S);
      expect((await request(app.app).get(`/review/advisories/${card(1)}?token=${token}`)).status).toBe(200);
      expect((await request(app.app).get(`/review/api/advisories/${card(1)}?token=${token}`)).status).toBe(200);
      expect((await request(app.app).get(`/review/advisories/${card(2)}?token=${token}`)).status).toBe(403);
      expect((await request(app.app).get(`/review?token=${token}`)).status).toBe(403);
      expect((await request(app.app).get(`/review/api/advisories?token=${token}`)).status).toBe(403);
    });

    it('are refused once expired, saying so on the page', async () => {
      const app = await build(OTHER_PROXY);
      await app.store.recordAdvisories([advisory(1)]);
      const token = signReviewLinkToken(LINK_SECRET, card(1), REVIEW_NOW.getTime() / 1000);
      const res = await request(app.app).get(`/review/advisories/${card(1)}?token=${token}`);
      expect(res.status).toBe(403);
      expect(res.text).toContain('This review link has expired.');
    });

    it('are refused when tampered with or repeated', async () => {
      const app = await build(OTHER_PROXY);
      await app.store.recordAdvisories([advisory(1)]);
      const token = signReviewLinkToken(LINK_SECRET, card(1), IN_AN_HOUR_S);
      const flipped = `${token.slice(0, -1)}${token.endsWith('A') ? 'B' : 'A'}`;
      expect((await request(app.app).get(`/review/advisories/${card(1)}?token=${flipped}`)).status).toBe(403);
      expect((await request(app.app).get(`/review/advisories/${card(1)}?token=${token}&token=${token}`)).status).toBe(403);
    });
  });

  describe('the request log', () => {
    it('names the reviewer and how they came in, never the token or the URL', async () => {
      const app = await build(AS_PROXY);
      await app.store.recordAdvisories([advisory(1)]);
      await request(app.app).get('/review?unit=Ward%207').set('X-Authenticated-User', 'rt.okafor');
      const token = signReviewLinkToken(LINK_SECRET, card(1), IN_AN_HOUR_S);
      await request(app.app).get(`/review/advisories/${card(1)}?token=${token}`);
      await request(app.app).get('/review/summary');
      const lines = app.log.lines().filter((line) => String(line['route']).startsWith('review'));
      expect(lines.map((l) => [l['route'], l['status'], l['reviewVia'], l['reviewer'], l['reviewRefused']])).toStrictEqual([
        ['review-list', 200, 'proxy', 'rt.okafor', undefined],
        ['review-advisory', 200, 'link', 'link', undefined],
        ['review-summary', 403, undefined, undefined, 'no-identity'],
      ]);
      expect(app.log.text()).not.toContain(token);
      expect(app.log.text()).not.toContain(token.split('.')[1]);
      expect(app.log.text()).not.toContain('Ward 7');
    });
  });

  it('the demo refuses a page asked for under another host name (DNS rebinding)', async () => {
    const app = await build({ mode: 'demo' });
    expect((await request(app.app).get('/review')).status).toBe(200);
    const rebound = await request(app.app).get('/review/api/advisories').set('Host', 'rebind.attacker.example:8080');
    expect(rebound.status).toBe(403);
    expect(rebound.body.code).toBe('CDS_ERR_REVIEW_ACCESS_DENIED');
  });
});
