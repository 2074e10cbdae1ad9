import { join } from 'node:path';
import Database from 'better-sqlite3';
import { afterEach, describe, expect, it } from 'vitest';
import { LATEST_SCHEMA_VERSION, StoreTooNewError } from '../../src/store/migrations.js';
import type { Store } from '../../src/store/store.js';
import { openWorkerStore } from '../../src/store/worker-store.js';
import { accepted, advisory, card, EHR, THEATRES } from './support/fixtures.js';
import { useTempDirs } from './support/temp-dir.js';

/**
 * The store on its own thread answers as the store on the caller's thread does: the same records
 * back, the same semantics for writes that arrive together, failures of the same kind, refusals at
 * open on the caller's thread.
 */

const RECEIVED = new Date('2026-03-14T10:00:00Z');
const T0 = Date.parse('2026-03-14T09:00:00Z');
const open: Store[] = [];

afterEach(async () => {
  for (const store of open.splice(0)) {
    await store.close();
  }
});

describe('openWorkerStore', () => {
  const tempDir = useTempDirs();

  function workerStore(file = join(tempDir(), 'audit.sqlite')): Store {
    const store = openWorkerStore({ file });
    open.push(store);
    return store;
  }

  it('gives back every field of a recorded advisory, unit and tenant included or left out', async () => {
    const store = workerStore();
    const withUnit = advisory(1, { client: { iss: EHR.iss, tenant: 'north-site' } });
    const { unit: _unit, ...withoutUnit } = advisory(2, { ruleId: 'spo2-below-target', indicator: 'critical' });
    await store.recordAdvisories([withUnit, withoutUnit]);

    expect(await store.getAdvisory(card(1))).toStrictEqual({ ...withUnit, feedback: [] });
    expect(await store.getAdvisory(card(2))).toStrictEqual({ ...withoutUnit, feedback: [] });
    expect(await store.getAdvisory(card(99))).toBeUndefined();
    expect(await store.isEmpty()).toBe(false);
  });

  it('keeps the quota across two concurrent feedback requests that together pass it', async () => {
    const store = workerStore();
    await store.recordAdvisories([advisory(1), advisory(2), advisory(3)]);
    const limits = { maxRecordsPerClientPerDay: 2 };
    const answers = await Promise.all([
      store.recordFeedback(EHR, [accepted(1, '2026-03-14T09:41:00Z'), accepted(2, '2026-03-14T09:41:00Z')], RECEIVED, limits),
      store.recordFeedback(EHR, [accepted(3, '2026-03-14T09:41:00Z')], RECEIVED, limits),
    ]);
    expect(answers.map((a) => a.kind)).toStrictEqual(['recorded', 'quota-exceeded']);
  });

  it('tells exactly one of two concurrent calls with the same token id that it is fresh', async () => {
    // CDS Hooks 2.0 §Trusting CDS Clients: jti is a nonce for replay protection (RFC 7519 §4.1.7)
    const store = workerStore();
    const answers = await Promise.all([
      store.checkAndRememberJti(THEATRES.iss, 'x', T0 + 300_000, new Date(T0), 10),
      store.checkAndRememberJti(THEATRES.iss, 'x', T0 + 300_000, new Date(T0), 10),
    ]);
    expect(answers.map((a) => a.kind).sort()).toStrictEqual(['fresh', 'replayed']);
  });

  it("commits a call's token id and cards together, and keeps the cards of a replayed id out", async () => {
    const store = workerStore();
    const token = { clientKey: EHR.iss, jti: 'y', expiresAt: T0 + 300_000, now: new Date(T0), maxPerClient: 10 };
    expect(await store.rememberJtiAndRecordAdvisories(token, [advisory(1)])).toStrictEqual({ kind: 'fresh' });
    // CDS Hooks 2.0 §Trusting CDS Clients: jti is a nonce for replay protection (RFC 7519 §4.1.7)
    expect(await store.rememberJtiAndRecordAdvisories(token, [advisory(2)])).toStrictEqual({ kind: 'replayed' });
    expect(await store.getAdvisory(card(1))).toStrictEqual({ ...advisory(1), feedback: [] });
    expect(await store.getAdvisory(card(2))).toBeUndefined();
  });

  it('rejects with a failure of the same kind, and only the caller that failed', async () => {
    const store = workerStore();
    const [bad, good, refused] = await Promise.allSettled([
      store.recordAdvisories([advisory(1), advisory(2, { issuedAt: 'not a time' })]),
      store.recordAdvisories([advisory(3)]),
      store.checkAndRememberJti(EHR.iss, 'a', T0 + 1000, new Date(T0), 0),
    ]);
    expect(bad?.status === 'rejected' ? String(bad.reason) : 'fulfilled').toMatch(/issuedAt/);
    expect(good?.status).toBe('fulfilled');
    expect(refused?.status === 'rejected' ? refused.reason : undefined).toBeInstanceOf(RangeError);
    expect((await store.listAdvisories({ limit: 10, offset: 0 })).items.map((i) => i.cardUuid)).toStrictEqual([card(3)]);
  });

  it('has committed every acknowledged write when closed, for the next opening to read', async () => {
    const file = join(tempDir(), 'audit.sqlite');
    const first = openWorkerStore({ file });
    const writes = [1, 2, 3].map((n) => first.recordAdvisories([advisory(n)]));
    await Promise.all(writes);
    await first.close();
    await first.close();
    await expect(first.getAdvisory(card(1))).rejects.toThrow(/closed/);

    const raw = new Database(file, { readonly: true });
    expect(raw.prepare('SELECT count(*) FROM advisory').pluck().get()).toBe(3);
    raw.close();
  });

  it('refuses a file written by a newer release on the caller\'s thread, at open', async () => {
    const file = join(tempDir(), 'audit.sqlite');
    await workerStore(file).close();
    const raw = new Database(file);
    raw.pragma(`user_version = ${String(LATEST_SCHEMA_VERSION + 1)}`);
    raw.close();
    expect(() => openWorkerStore({ file })).toThrow(StoreTooNewError);
  });
});
