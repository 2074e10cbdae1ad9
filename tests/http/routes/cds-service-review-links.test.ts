import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { REVIEW_LINK_LABEL } from '../../../src/cds/review-links.js';
import { checkReviewLinkToken, createReviewLinker } from '../../../src/security/review-link-token.js';
import { openStore } from '../../../src/store/open-store.js';
import { expectConformant } from '../../helpers/card-conformance.js';
import { useTempDirs } from '../../store/support/temp-dir.js';
import { NOW, orderSignRequest } from '../larkspur-fixtures.js';
import { buildTestApp } from '../test-app.js';

const SECRET = Buffer.alloc(32, 9);
const BASE = 'https://cds.larkspur-bay.example';

describe('card links to the review pages', () => {
  const tempDir = useTempDirs();

  it('every card links to its own advisory page with a token for that card only, and stays conformant', async () => {
    const opened = openStore({ dataDir: tempDir() });
    if (opened.kind !== 'opened') {
      throw new Error(opened.problem);
    }
    try {
      const linkFor = createReviewLinker({ baseUrl: () => BASE, signing: { secret: SECRET, ttlS: 86_400, clock: () => NOW } });
      const { app } = await buildTestApp({ store: opened.store, review: { access: { mode: 'production', proxyAddresses: [], linkSecret: SECRET }, linkFor } });
      const res = await request(app).post('/cds-services/oxygen-order-sign').send(orderSignRequest());
      expect(res.status).toBe(200);
      expectConformant(res.body);
      const cards = res.body.cards as { uuid: string; links: { label: string; url: string; type: string }[] }[];
      expect(cards.length).toBeGreaterThan(0);
      for (const card of cards) {
        const links = card.links.filter((l) => l.label === REVIEW_LINK_LABEL);
        expect(links).toHaveLength(1);
        const url = new URL(links[0]?.url ?? '');
        expect(links[0]?.type).toBe('absolute');
        expect(`${url.origin}${url.pathname}`).toBe(`${BASE}/review/advisories/${card.uuid}`);
        const token = url.searchParams.get('token') ?? '';
        expect(checkReviewLinkToken(SECRET, token, card.uuid, NOW.getTime()).kind).toBe('valid');
        const other = cards.find((c) => c.uuid !== card.uuid);
        if (other !== undefined) {
          expect(checkReviewLinkToken(SECRET, token, other.uuid, NOW.getTime())).toStrictEqual({ kind: 'invalid', reason: 'other-advisory' });
        }
      }
    } finally {
      await opened.store.close();
    }
  });

  it('cards carry no review link when the review pages are not set up', async () => {
    const { app } = await buildTestApp();
    const res = await request(app).post('/cds-services/oxygen-order-sign').send(orderSignRequest());
    const labels = (res.body.cards as { links?: { label: string }[] }[]).flatMap((c) => (c.links ?? []).map((l) => l.label));
    expect(labels).not.toContain(REVIEW_LINK_LABEL);
  });
});
