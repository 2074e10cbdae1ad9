import { describe, expect, it } from 'vitest';
import { createLogger } from '../../src/log/logger.js';
import { replayShareKey } from '../../src/security/jwt-verifier.js';
import { createStoreReplayCache } from '../../src/security/store-replay-cache.js';
import { openTempStore } from '../helpers/temp-store.js';
import { ehrClient, EHR_ISS, NOW, trustOf } from './support/fixtures.js';

const silent = createLogger({ level: 'silent' });
const T0 = NOW.getTime();

describe('createStoreReplayCache', () => {
  it('takes a jti once, refuses it again, and refuses a new one past the client share', async () => {
    const { store } = openTempStore();
    const cache = createStoreReplayCache({ store, maxPerClient: 2, clock: () => NOW, logger: silent });
    const ehr = JSON.stringify([EHR_ISS]);
    // CDS Hooks 2.0 §Trusting CDS Clients: jti is a nonce for replay protection (RFC 7519 §4.1.7)
    expect(await cache.checkAndRemember(ehr, 'jti-1', T0 + 300_000)).toStrictEqual({ kind: 'fresh' });
    expect(await cache.checkAndRemember(ehr, 'jti-1', T0 + 300_000)).toStrictEqual({ kind: 'replayed' });
    expect(await cache.checkAndRemember(ehr, 'jti-2', T0 + 120_000)).toStrictEqual({ kind: 'fresh' });
    // the share's oldest id expires 120 s from now (arithmetic)
    expect(await cache.checkAndRemember(ehr, 'jti-3', T0 + 300_000)).toStrictEqual({ kind: 'client-full', retryAfterS: 120 });
    expect(await cache.checkAndRemember(JSON.stringify(['https://theatres.larkspur-bay.example']), 'jti-3', T0 + 300_000)).toStrictEqual({
      kind: 'fresh',
    });
  });

  describe('edge cases', () => {
    it('refuses a share that is not a positive integer', () => {
      const { store } = openTempStore();
      expect(() => createStoreReplayCache({ store, maxPerClient: 0, clock: () => NOW, logger: silent })).toThrow(
        'createStoreReplayCache: maxPerClient must be a positive integer',
      );
    });
  });
});

describe('replayShareKey', () => {
  it('gives each listed tenant its own share, and a client without a tenant list one share whatever it sends', () => {
    const trust = trustOf([ehrClient({ tenants: ['lbgh-wards', 'lbgh-theatres'] }), ehrClient({ iss: 'https://other.larkspur-bay.example' })]);
    const listed = trust.clients.get(EHR_ISS);
    const unlisted = trust.clients.get('https://other.larkspur-bay.example');
    if (listed === undefined || unlisted === undefined) throw new Error('trust fixture');
    expect(replayShareKey(listed, 'lbgh-wards')).toBe(JSON.stringify([EHR_ISS, 'lbgh-wards']));
    expect(replayShareKey(listed, 'lbgh-theatres')).not.toBe(replayShareKey(listed, 'lbgh-wards'));
    expect(replayShareKey(unlisted, 'made-up-1')).toBe(replayShareKey(unlisted, 'made-up-2'));
    expect(replayShareKey(unlisted, undefined)).toBe(JSON.stringify(['https://other.larkspur-bay.example']));
  });
});
