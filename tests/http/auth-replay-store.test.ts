import request from 'supertest';
import { describe, expect, it } from 'vitest';
import { createLogger } from '../../src/log/logger.js';
import type { Store } from '../../src/store/store.js';
import { makeTempDataDir } from '../helpers/temp-store.js';
import { createMemoryLog } from '../log/memory-log.js';
import { claims, DISCOVERY_AUD, EHR_ES384, EHR_ISS, NOW_S, THEATRES_ES384, THEATRES_ISS } from '../security/support/fixtures.js';
import { signToken } from '../security/support/keys.js';
import { buildProductionApp } from '../security/support/production-app.js';

/**
 * The replay cache in the store, through the production app: a client past its share of live token
 * ids gets 429 with Retry-After while other clients go on; a replayed token stays 401, also after a
 * restart; a store that cannot be asked refuses the token with 503 (fail closed).
 */

const bearer = (token: string): string => `Bearer ${token}`;
const ehrToken = (): string => signToken(EHR_ES384, claims(DISCOVERY_AUD));
const theatresToken = (): string => signToken(THEATRES_ES384, claims(DISCOVERY_AUD, { iss: THEATRES_ISS }));

function summary(lines: Record<string, unknown>[], index: number): Record<string, unknown> | undefined {
  return lines.filter((line) => line['msg'] === 'request')[index];
}

describe('the replay cache in the store', () => {
  it("refuses a client past its share with 429 and Retry-After, while another client's calls go through", async () => {
    const built = await buildProductionApp({ replayMaxPerClient: 3 });
    const first = ehrToken();
    const statuses: number[] = [];
    for (const token of [first, ehrToken(), ehrToken()]) {
      statuses.push((await request(built.app).get('/cds-services').set('Authorization', bearer(token))).status);
    }
    expect(statuses).toStrictEqual([200, 200, 200]);

    const over = await request(built.app).get('/cds-services').set('Authorization', bearer(ehrToken()));
    // RFC 6585 §4: 429 Too Many Requests; RFC 9110 §10.2.3: Retry-After in seconds
    expect(over.status).toBe(429);
    // the oldest id is held until exp (iat + 300 s, less the 5 s the claims back-date iat) plus the
    // 60 s leeway: 295 + 60 = 355 s from now (arithmetic on the fixtures' claims)
    expect(over.headers['retry-after']).toBe('355');
    expect(over.body).toStrictEqual({
      code: 'CDS_ERR_AUTH_TOO_MANY_TOKENS',
      message: 'This client holds as many unexpired tokens as this service remembers for it; retry after the Retry-After delay.',
    });
    expect(summary(built.log.lines(), 3)).toMatchObject({ status: 429, authRefused: 'jti-share-full', iss: EHR_ISS });

    // a replayed token is still a replay (401), not a rate limit
    const replayed = await request(built.app).get('/cds-services').set('Authorization', bearer(first));
    expect(replayed.status).toBe(401);
    expect(replayed.headers['retry-after']).toBeUndefined();

    const other = await request(built.app).get('/cds-services').set('Authorization', bearer(theatresToken()));
    expect(other.status).toBe(200);
  });

  it('refuses a token replayed after a restart on the same data directory', async () => {
    const dataDir = makeTempDataDir();
    const token = ehrToken();
    const before = await buildProductionApp({ dataDir });
    expect((await request(before.app).get('/cds-services').set('Authorization', bearer(token))).status).toBe(200);
    await before.store.close();

    const after = await buildProductionApp({ dataDir });
    const replayed = await request(after.app).get('/cds-services').set('Authorization', bearer(token));
    // CDS Hooks 2.0 §Trusting CDS Clients: jti is a nonce for replay protection (RFC 7519 §4.1.7)
    expect(replayed.status).toBe(401);
    expect(summary(after.log.lines(), 0)).toMatchObject({ authRefused: 'jti-replayed', iss: EHR_ISS });
    const fresh = await request(after.app).get('/cds-services').set('Authorization', bearer(ehrToken()));
    expect(fresh.status).toBe(200);
  });

  describe('edge cases', () => {
    it('refuses the token with 503 and logs it when the store cannot be asked (fail closed)', async () => {
      const log = createMemoryLog();
      const built = await buildProductionApp({
        replayStore: (real: Store) => ({ ...real, checkAndRememberJti: () => Promise.reject(new Error('SQLITE_BUSY')) }),
        replayLogger: createLogger({ level: 'info', destination: log.stream }),
      });
      const response = await request(built.app).get('/cds-services').set('Authorization', bearer(ehrToken()));
      expect(response.status).toBe(503);
      expect(response.body).toStrictEqual({
        code: 'CDS_ERR_STORE_UNAVAILABLE',
        message: 'The service could not use its store, so the request was not accepted; retry later.',
      });
      expect(log.lines().map(({ replayCache, errorType, level }) => ({ replayCache, errorType, level }))).toStrictEqual([
        { replayCache: 'store-failed', errorType: 'Error', level: 50 },
      ]);
      expect(summary(built.log.lines(), 0)).toMatchObject({ status: 503, authRefused: 'replay-check-failed' });
    });

    it('counts a token that expired long ago against nobody: it is refused before the cache is asked', async () => {
      const built = await buildProductionApp({ replayMaxPerClient: 1 });
      const expired = signToken(EHR_ES384, claims(DISCOVERY_AUD, { iat: NOW_S - 4000, exp: NOW_S - 3700 }));
      expect((await request(built.app).get('/cds-services').set('Authorization', bearer(expired))).status).toBe(401);
      // the one slot is still free for a valid token
      expect((await request(built.app).get('/cds-services').set('Authorization', bearer(ehrToken()))).status).toBe(200);
    });
  });
});
