import { spawn } from 'node:child_process';
import { join } from 'node:path';
import Database from 'better-sqlite3';
import { describe, expect, it } from 'vitest';
import { openSqliteStore } from '../../src/store/sqlite-store.js';
import {
  accepted,
  advisory,
  card,
  EHR,
  GENEROUS,
  overridden,
  THEATRES,
  WARD_7,
} from './support/fixtures.js';
import { useSqliteStores } from './support/sqlite-stores.js';
import { useTempDirs } from './support/temp-dir.js';

const RECEIVED = new Date('2026-03-14T10:00:00Z');
const trackedStore = useSqliteStores();

describe('openSqliteStore: the audit trail', () => {
  it('gives back every field of a recorded advisory, unit and tenant included or left out', async () => {
    const store = trackedStore();
    const withUnit = advisory(1, { client: { iss: EHR.iss, tenant: 'north-site' } });
    const { unit: _unit, ...withoutUnit } = advisory(2, { ruleId: 'spo2-below-target', indicator: 'critical' });
    await store.recordAdvisories([withUnit, withoutUnit]);

    expect(await store.getAdvisory(card(1))).toStrictEqual({ ...withUnit, feedback: [] });
    expect(await store.getAdvisory(card(2))).toStrictEqual({ ...withoutUnit, feedback: [] });
    expect(await store.getAdvisory(card(99))).toBeUndefined();
  });

  it('records a retried hook call once: a card uuid already held is left as it was', async () => {
    const store = trackedStore();
    await store.recordAdvisories([advisory(1)]);
    await store.recordAdvisories([advisory(1, { summary: 'a retry computed later' }), advisory(2)]);

    const page = await store.listAdvisories({ limit: 10, offset: 0 });
    expect(page.total).toBe(2);
    expect((await store.getAdvisory(card(1)))?.summary).toBe(advisory(1).summary);
  });

  it('records all cards of a call or none of them', async () => {
    const store = trackedStore();
    await expect(
      store.recordAdvisories([advisory(1), advisory(2, { issuedAt: 'not a time' })]),
    ).rejects.toThrow(/issuedAt/);
    expect(await store.isEmpty()).toBe(true);
    expect((await store.listAdvisories({ limit: 10, offset: 0 })).total).toBe(0);
  });

  it('is empty until the first advisory, and stays not-empty after a purge removed it', async () => {
    const store = trackedStore();
    expect(await store.isEmpty()).toBe(true);
    await store.recordAdvisories([advisory(1)]);
    expect(await store.isEmpty()).toBe(false);
    await store.purge(new Date('2027-01-01T00:00:00Z'), RECEIVED);
    // The demo seeds only a store that never held anything, not one retention has emptied.
    expect(await store.isEmpty()).toBe(false);
  });
});

describe('openSqliteStore: purge by retention', () => {
  const CUTOFF = new Date('2026-03-14T00:00:00Z');
  const NOW = new Date('2026-04-13T00:00:00Z');

  it('removes advisories issued before the cutoff with all their feedback, and keeps the rest', async () => {
    const store = trackedStore();
    await store.recordAdvisories([
      advisory(1, { issuedAt: '2026-03-13T23:59:59.999Z' }),
      advisory(2, { issuedAt: '2026-03-14T00:00:00.000Z' }),
    ]);
    // feedback on the old card arrived after the cutoff: it still goes with its advisory
    await store.recordFeedback(EHR, [accepted(1, '2026-03-14T00:10:00Z')], new Date('2026-03-14T00:10:00Z'), GENEROUS);
    await store.recordFeedback(EHR, [accepted(2, '2026-03-14T00:10:00Z')], new Date('2026-03-14T00:10:00Z'), GENEROUS);

    expect(await store.purge(CUTOFF, NOW)).toStrictEqual({ advisories: 1, feedback: 1, replayIds: 0 });
    expect(await store.getAdvisory(card(1))).toBeUndefined();
    expect((await store.getAdvisory(card(2)))?.feedback).toHaveLength(1);
    expect(await store.facets()).toStrictEqual({ units: [WARD_7], ruleIds: ['spo2-above-target'] });
  });

  it("removes feedback received before the cutoff and works out the kept advisory's latest outcome again", async () => {
    const store = trackedStore();
    await store.recordAdvisories([advisory(1, { issuedAt: '2026-03-14T09:00:00Z' })]);
    // An advisory issued in the window with feedback stamped as received earlier (a clock step back)
    await store.recordFeedback(EHR, [overridden(1, '2026-03-14T09:10:00Z')], new Date('2026-03-13T12:00:00Z'), GENEROUS);
    await store.recordFeedback(EHR, [accepted(1, '2026-03-14T09:05:00Z')], new Date('2026-03-14T12:00:00Z'), GENEROUS);
    expect((await store.listAdvisories({ limit: 1, offset: 0 })).items[0]?.latestOutcome).toBe('overridden');

    expect(await store.purge(CUTOFF, NOW)).toStrictEqual({ advisories: 0, feedback: 1, replayIds: 0 });
    expect((await store.listAdvisories({ limit: 1, offset: 0 })).items[0]).toMatchObject({
      latestOutcome: 'accepted',
      feedbackCount: 1,
    });
  });

  it('removes unmatched feedback received before the cutoff', async () => {
    const store = trackedStore();
    await store.recordFeedback(THEATRES, [accepted(8, '2026-03-13T09:00:00Z')], new Date('2026-03-13T09:00:00Z'), GENEROUS);
    await store.recordFeedback(THEATRES, [accepted(9, '2026-03-14T09:00:00Z')], new Date('2026-03-14T09:00:00Z'), GENEROUS);
    expect(await store.purge(CUTOFF, NOW)).toStrictEqual({ advisories: 0, feedback: 1, replayIds: 0 });
    expect((await store.listUnmatchedFeedback(10, 0)).items.map((f) => f.cardUuid)).toStrictEqual([card(9)]);
  });

  it('changes nothing when everything is inside the retention window', async () => {
    const store = trackedStore();
    await store.recordAdvisories([advisory(1)]);
    await store.recordFeedback(EHR, [accepted(1, '2026-03-14T09:41:00Z')], RECEIVED, GENEROUS);
    expect(await store.purge(CUTOFF, NOW)).toStrictEqual({ advisories: 0, feedback: 0, replayIds: 0 });
    expect((await store.getAdvisory(card(1)))?.feedback).toHaveLength(1);
  });
});

describe('openSqliteStore: durability on disk', () => {
  const tempDir = useTempDirs();

  it('keeps every committed write when the file is opened again after close', async () => {
    const file = join(tempDir(), 'audit.sqlite');
    const first = openSqliteStore({ file });
    await first.recordAdvisories([advisory(1), advisory(2)]);
    await first.recordFeedback(EHR, [accepted(1, '2026-03-14T09:41:00Z')], RECEIVED, GENEROUS);
    await first.recordFeedback(THEATRES, [accepted(3, '2026-03-14T09:41:00Z')], RECEIVED, GENEROUS);
    await first.checkAndRememberJti(EHR.iss, 'jti-1', RECEIVED.getTime() + 300_000, RECEIVED, 10);
    await first.close();
    await first.close();

    const again = trackedStore(file);
    expect((await again.listAdvisories({ limit: 10, offset: 0 })).total).toBe(2);
    expect((await again.getAdvisory(card(1)))?.feedback).toHaveLength(1);
    expect((await again.listUnmatchedFeedback(10, 0)).total).toBe(1);
    // CDS Hooks 2.0 §Trusting CDS Clients: a jti is refused for the token's lifetime, restarts included
    expect(await again.checkAndRememberJti(EHR.iss, 'jti-1', RECEIVED.getTime() + 300_000, RECEIVED, 10)).toStrictEqual({
      kind: 'replayed',
    });
  });

  it('keeps every acknowledged write when the writing process is killed with SIGKILL', async () => {
    // Issue 7: nothing acknowledged is lost; the child prints a card number only after its commit.
    // SIGKILL checks that nothing is acknowledged before it is committed; surviving a power cut is
    // what synchronous = FULL is for, and no test here can cut the power.
    const file = join(tempDir(), 'audit.sqlite');
    const child = spawn(process.execPath, ['--import', 'tsx', 'tests/store/support/write-until-killed.ts', file], {
      stdio: ['ignore', 'pipe', 'pipe'],
    });
    let acknowledged = 0;
    let buffered = '';
    let errors = '';
    child.stderr.on('data', (chunk: Buffer) => (errors += chunk.toString()));
    await new Promise<void>((resolve, reject) => {
      child.on('exit', () => reject(new Error(`writer exited early: ${errors}`)));
      child.stdout.on('data', (chunk: Buffer) => {
        buffered += chunk.toString();
        const lines = buffered.split('\n');
        buffered = lines.pop() ?? '';
        acknowledged = Math.max(acknowledged, ...lines.map(Number));
        if (acknowledged >= 200) {
          child.removeAllListeners('exit');
          child.kill('SIGKILL');
          child.on('exit', () => resolve());
        }
      });
    });

    const after = trackedStore(file);
    const page = await after.listAdvisories({ outcome: 'accepted', limit: 1, offset: 0 });
    // every acknowledged card and its feedback is there; the one in flight may or may not be
    expect(page.total).toBeGreaterThanOrEqual(acknowledged);
    for (let n = 1; n <= acknowledged; n += 1) {
      expect((await after.getAdvisory(card(n)))?.feedback).toHaveLength(1);
    }
  });

  it('keeps the file in WAL mode, so the review pages read while the hook writes', () => {
    const file = join(tempDir(), 'audit.sqlite');
    trackedStore(file);
    const raw = new Database(file, { readonly: true });
    // SQLite, "Write-Ahead Logging": WAL mode persists in the database file
    expect(raw.pragma('journal_mode', { simple: true })).toBe('wal');
    raw.close();
  });

  it("shares one file between two open stores: each sees the other's commits and replay ids", async () => {
    const file = join(tempDir(), 'audit.sqlite');
    const one = trackedStore(file);
    const two = trackedStore(file);
    await one.recordAdvisories([advisory(1)]);
    await two.recordFeedback(EHR, [accepted(1, '2026-03-14T09:41:00Z')], RECEIVED, GENEROUS);
    expect((await one.getAdvisory(card(1)))?.feedback).toHaveLength(1);
    await one.checkAndRememberJti(EHR.iss, 'jti-1', RECEIVED.getTime() + 300_000, RECEIVED, 10);
    expect((await two.checkAndRememberJti(EHR.iss, 'jti-1', RECEIVED.getTime() + 300_000, RECEIVED, 10)).kind).toBe(
      'replayed',
    );
  });

  it('answers a closed store with a rejection, not a silent success', async () => {
    const store = openSqliteStore({ file: join(tempDir(), 'audit.sqlite') });
    await store.close();
    await expect(store.recordAdvisories([advisory(1)])).rejects.toThrow();
  });
});
