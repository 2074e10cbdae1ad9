import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { ENV_DEFAULTS } from '../../../src/config/env-config.js';
import type { Policy } from '../../../src/core/policy.js';
import { createPolicyHolder, type PolicySnapshot } from '../../../src/live-policy/policy-snapshot.js';
import { REVIEW_HEADERS } from '../../../src/http/review-headers.js';
import type { ReviewAccessConfig } from '../../../src/security/review-access.js';
import { NOW } from '../larkspur-fixtures.js';
import { LINK_SECRET } from '../support/review-app.js';
import { buildTestApp, bundledSnapshot } from '../test-app.js';

/** `GET /policy`: the policy in force as the service reads it, and who may read it. */

// FIPS 180-4 SHA-256 of the bundled policy file's exact bytes, as node:crypto computes it.
const FILE_HASH = createHash('sha256').update(readFileSync(ENV_DEFAULTS.OXYGEN_CHECKER_POLICY)).digest('hex');

const DEMO: ReviewAccessConfig = { mode: 'demo' };
// supertest connects from loopback, so 127.0.0.1 plays the hospital's sign-in proxy here.
const AS_PROXY: ReviewAccessConfig = { mode: 'production', identityHeader: 'x-authenticated-user', proxyAddresses: ['127.0.0.1'], linkSecret: LINK_SECRET };
const OTHER_PROXY: ReviewAccessConfig = { ...AS_PROXY, proxyAddresses: ['10.20.0.5'] };

const REFUSED = { code: 'CDS_ERR_POLICY_ACCESS_DENIED', message: 'Read the policy in force through the hospital sign-in.' };

async function appWith(access: ReviewAccessConfig, snapshot?: PolicySnapshot) {
  const holder = createPolicyHolder(snapshot ?? (await bundledSnapshot()));
  const built = await buildTestApp({ policy: holder, review: { access } });
  return { ...built, holder };
}

describe('GET /policy', () => {
  it('gives the policy in force, its full content hash and when it was loaded, never cached', async () => {
    const { app, log } = await appWith(DEMO);
    const res = await request(app).get('/policy');
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/json; charset=utf-8');
    expect(res.headers['cache-control']).toBe('no-store'); // RFC 9111 §5.2.2.5
    const body = res.body as Record<string, unknown> & { effective: Policy };
    expect(body).toMatchObject({
      id: 'based-on-bts-2017',
      version: '1.0.0',
      title: 'Adult acute oxygen targets based on BTS 2017',
      contentHash: FILE_HASH,
      contentHashAlgorithm: 'sha256',
      loadedAt: NOW.toISOString(),
      acknowledgements: [],
      warnings: [],
    });
    expect(body['effectiveFrom']).toBe('2026-12-01'); // as policies/based-on-bts-2017.yaml states it
    expect(body.effective.targets.standard).toStrictEqual({ lowPercent: 94, highPercent: 98 }); // BTS 2017, Tables 1-3
    expect(body.effective.targets.hypercapnicRisk).toStrictEqual({ lowPercent: 88, highPercent: 92 }); // BTS 2017, Table 4
    // 6.0 kPa × 7.50062 mmHg/kPa = 45.0 mmHg (UCUM conversion; BTS 2017 clarification: hypercapnia at ≥ 6 kPa)
    expect(body.effective.hypercapnicRisk.hypercapniaPaco2.mmHg).toBeCloseTo(45.0, 1);
    expect(body.effective.hypercapnicRisk.hypercapniaPaco2.display).toBe('6 kPa');
    // an optional value the file leaves out is shown as null, not dropped
    expect(body.effective.site.barometricPressureMmHg).toBeNull();
    expect(log.lines().find((line) => line['route'] === 'policy')).toMatchObject({ status: 200, reviewVia: 'demo' });
  });

  it('shows a new policy once it is in force', async () => {
    const { app, holder } = await appWith(DEMO);
    const first = await bundledSnapshot();
    const next: PolicySnapshot = {
      ...first,
      policy: { ...first.policy, version: '1.1.0' },
      contentHash: 'a'.repeat(64),
      loadedAt: '2026-12-01T14:30:00.000Z',
    };
    holder.replace(next);
    const res = await request(app).get('/policy');
    expect(res.body).toMatchObject({ version: '1.1.0', contentHash: 'a'.repeat(64), loadedAt: '2026-12-01T14:30:00.000Z' });
  });

  it('shows acknowledgements, warnings without the server path, and effectiveFrom when the policy has one', async () => {
    const first = await bundledSnapshot();
    const snapshot: PolicySnapshot = {
      ...first,
      policy: { ...first.policy, effectiveFrom: '2027-01-04' },
      acknowledgements: [{ ruleId: 'acute-hypercapnic-acidosis', change: 'disabled', reason: 'Invented demo reason for the test' }],
      warnings: [{ file: '/etc/larkspur-bay/private/policy.yaml', path: 'hypercapnicRisk.conditions.9', message: 'is not known to carry hypercapnic risk', line: 30, column: 7 }],
    };
    const { app } = await appWith(DEMO, snapshot);
    const res = await request(app).get('/policy');
    expect(res.body).toMatchObject({
      effectiveFrom: '2027-01-04',
      acknowledgements: [{ ruleId: 'acute-hypercapnic-acidosis', change: 'disabled', reason: 'Invented demo reason for the test' }],
      warnings: [{ path: 'hypercapnicRisk.conditions.9', message: 'is not known to carry hypercapnic risk', line: 30, column: 7 }],
    });
    expect(res.text).not.toContain('/etc/larkspur-bay/private');
  });

  describe('who may read it', () => {
    it('opens in production to staff signed in through the proxy', async () => {
      const { app, log } = await appWith(AS_PROXY);
      const res = await request(app).get('/policy').set('X-Authenticated-User', 'pharm.adeyemi');
      expect(res.status).toBe(200);
      expect(log.lines().find((line) => line['route'] === 'policy')).toMatchObject({ reviewVia: 'proxy', reviewer: 'pharm.adeyemi' });
    });

    it.each([
      ['production, the proxy without an identity', AS_PROXY, {}, 'no-identity'],
      ['production, an identity from another address', OTHER_PROXY, { 'X-Authenticated-User': 'pharm.adeyemi', 'X-Forwarded-For': '10.20.0.5' }, 'not-from-proxy'],
      ['production, the identity sent twice', AS_PROXY, { 'X-Authenticated-User': ['pharm.adeyemi', 'admin'] }, 'identity-unreadable'],
      ['demo, asked for by a name that is not loopback', DEMO, { Host: 'rebind.example' }, 'demo-host-not-loopback'],
    ] as const)('refuses %s with 403', async (_name, access, headers, reason) => {
      const { app, log } = await appWith(access);
      let call = request(app).get('/policy');
      for (const [name, value] of Object.entries(headers) as [string, string | readonly string[]][]) {
        // A list goes out as one header line per item (node:http), which superagent's types do not say.
        call = call.set(name, (typeof value === 'string' ? value : [...value]) as string);
      }
      const res = await call;
      expect(res.status).toBe(403);
      expect(res.body).toStrictEqual(REFUSED);
      expect(res.text).not.toContain(FILE_HASH);
      expect(log.lines().find((line) => line['route'] === 'policy')).toMatchObject({ status: 403, reviewRefused: reason });
    });

    it('is not served when the app has no staff access set up', async () => {
      const { app } = await buildTestApp();
      expect((await request(app).get('/policy')).status).toBe(404);
    });
  });

  it('carries the review headers and no CORS, so another site cannot read it from a browser', async () => {
    const { app } = await appWith(DEMO);
    const res = await request(app).get('/policy').set('Origin', 'https://elsewhere.example');
    expect(res.status).toBe(200);
    for (const [name, value] of Object.entries(REVIEW_HEADERS)) {
      expect(res.headers[name.toLowerCase()], name).toBe(value);
    }
    expect(res.headers['access-control-allow-origin']).toBeUndefined(); // Fetch Standard §CORS protocol
    const preflight = await request(app).options('/policy').set('Origin', 'https://elsewhere.example');
    expect(preflight.headers['access-control-allow-methods']).toBeUndefined();
  });

  describe('edge cases', () => {
    it.each([
      ['another method', (app: Parameters<typeof request>[0]) => request(app).post('/policy').send({ id: 'x' })],
      ['a body on GET', (app: Parameters<typeof request>[0]) => request(app).get('/policy').set('Content-Type', 'application/json').send('{')],
      ['a query string', (app: Parameters<typeof request>[0]) => request(app).get('/policy?version=%00&id[]=1')],
      ['a trailing path', (app: Parameters<typeof request>[0]) => request(app).get('/policy/../policy/x')],
      ['an identity header of control characters', (app: Parameters<typeof request>[0]) => request(app).get('/policy').set('X-Authenticated-User', '\t')],
      ['a very long identity', (app: Parameters<typeof request>[0]) => request(app).get('/policy').set('X-Authenticated-User', 'x'.repeat(8000))],
    ])('never answers %s with a server error', async (_name, call) => {
      for (const access of [DEMO, AS_PROXY]) {
        const { app } = await appWith(access);
        const res = await call(app);
        expect(res.status, `${access.mode}: ${res.text}`).toBeLessThan(500);
      }
    });
  });
});
