import { describe, expect, it } from 'vitest';
import { createMemoryReplayCache } from '../../src/security/replay-cache.js';

function clockAt(startMs: number) {
  let now = startMs;
  return { clock: () => new Date(now), advance: (ms: number) => (now += ms) };
}

const T0 = Date.parse('2025-03-14T09:00:00Z');
const ISS = JSON.stringify(['https://ehr.larkspur-bay.example']);
const FRESH = { kind: 'fresh' };
const REPLAYED = { kind: 'replayed' };

describe('createMemoryReplayCache', () => {
  it('accepts a jti once and refuses it again while it is held', async () => {
    // CDS Hooks 2.0 §Trusting CDS Clients: jti is a nonce for replay protection (RFC 7519 §4.1.7)
    const time = clockAt(T0);
    const cache = createMemoryReplayCache({ maxEntries: 10, clock: time.clock });
    expect(await cache.checkAndRemember(ISS, 'jti-1', T0 + 300_000)).toStrictEqual(FRESH);
    expect(await cache.checkAndRemember(ISS, 'jti-1', T0 + 300_000)).toStrictEqual(REPLAYED);
    expect(await cache.checkAndRemember(ISS, 'jti-2', T0 + 300_000)).toStrictEqual(FRESH);
  });

  it('forgets a jti once its token has expired', async () => {
    const time = clockAt(T0);
    const cache = createMemoryReplayCache({ maxEntries: 10, clock: time.clock });
    await cache.checkAndRemember(ISS, 'jti-1', T0 + 1000);
    time.advance(1000);
    expect(await cache.checkAndRemember(ISS, 'jti-1', T0 + 5000)).toStrictEqual(FRESH);
  });

  it('stays within its size bound by dropping expired ids', async () => {
    const time = clockAt(T0);
    const cache = createMemoryReplayCache({ maxEntries: 3, clock: time.clock });
    for (const id of ['a', 'b', 'c']) {
      expect(await cache.checkAndRemember(ISS, id, T0 + 1000)).toStrictEqual(FRESH);
    }
    time.advance(2000);
    expect(await cache.checkAndRemember(ISS, 'd', T0 + 10_000)).toStrictEqual(FRESH);
    // the three expired ids were swept from the front; only d is held
    expect(cache.size()).toBe(1);
  });

  it('refuses new ids when full of unexpired ones, rather than forget one (fail closed)', async () => {
    const time = clockAt(T0);
    const full: string[] = [];
    const cache = createMemoryReplayCache({ maxEntries: 2, clock: time.clock, onFull: () => full.push('full') });
    await cache.checkAndRemember(ISS, 'a', T0 + 60_000);
    await cache.checkAndRemember(ISS, 'b', T0 + 60_000);
    expect(await cache.checkAndRemember(ISS, 'c', T0 + 60_000)).toStrictEqual({ kind: 'unavailable' });
    expect(full).toStrictEqual(['full']);
    // The ids held are still refused: nothing was forgotten to make room.
    expect(await cache.checkAndRemember(ISS, 'a', T0 + 60_000)).toStrictEqual(REPLAYED);
    expect(cache.size()).toBe(2);
  });

  it('keeps one jti apart for two clients: each is a different token', async () => {
    const cache = createMemoryReplayCache({ maxEntries: 10, clock: () => new Date(T0) });
    expect(await cache.checkAndRemember(ISS, 'jti-1', T0 + 1000)).toStrictEqual(FRESH);
    const theatres = JSON.stringify(['https://theatres.larkspur-bay.example']);
    expect(await cache.checkAndRemember(theatres, 'jti-1', T0 + 1000)).toStrictEqual(FRESH);
  });

  describe('edge cases', () => {
    it('tells exactly one of two concurrent calls with the same id that it is new', async () => {
      const cache = createMemoryReplayCache({ maxEntries: 10, clock: () => new Date(T0) });
      const answers = await Promise.all([cache.checkAndRemember(ISS, 'x', T0 + 1000), cache.checkAndRemember(ISS, 'x', T0 + 1000)]);
      expect(answers.map((answer) => answer.kind).sort()).toStrictEqual(['fresh', 'replayed']);
    });

    it('refuses a size bound that is not a positive integer', () => {
      expect(() => createMemoryReplayCache({ maxEntries: 0, clock: () => new Date(T0) })).toThrow(
        'createMemoryReplayCache: maxEntries must be a positive integer',
      );
    });
  });
});
