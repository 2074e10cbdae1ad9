import { spawn } from 'node:child_process';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { openSqliteStore } from '../../src/store/sqlite-store.js';
import type { Store } from '../../src/store/store.js';
import {
  accepted,
  advisory,
  card,
  EHR,
  EMERGENCY,
  GENEROUS,
  overridden,
  THEATRES,
  WARD_7,
} from './support/fixtures.js';
import { useTempDirs } from './support/temp-dir.js';

const RECEIVED = new Date('2026-03-14T10:00:00Z');
const open: Store[] = [];

function memoryStore(): Store {
  const store = openSqliteStore({ file: ':memory:' });
  open.push(store);
  return store;
}

afterEach(async () => {
  for (const store of open.splice(0)) {
    await store.close();
  }
});

describe('openSqliteStore: the audit trail', () => {
  it('gives back every field of a recorded advisory, unit and tenant included or left out', async () => {
    const store = memoryStore();
    const withUnit = advisory(1, { client: { iss: EHR.iss, tenant: 'north-site' } });
    const { unit: _unit, ...withoutUnit } = advisory(2, { ruleId: 'spo2-below-target', indicator: 'critical' });
    await store.recordAdvisories([withUnit, withoutUnit]);

    expect(await store.getAdvisory(card(1))).toStrictEqual({ ...withUnit, feedback: [] });
    expect(await store.getAdvisory(card(2))).toStrictEqual({ ...withoutUnit, feedback: [] });
    expect(await store.getAdvisory(card(99))).toBeUndefined();
  });

  it('records a retried hook call once: a card uuid already held is left as it was', async () => {
    const store = memoryStore();
    await store.recordAdvisories([advisory(1)]);
    await store.recordAdvisories([advisory(1, { summary: 'a retry computed later' }), advisory(2)]);

    const page = await store.listAdvisories({ limit: 10, offset: 0 });
    expect(page.total).toBe(2);
    expect((await store.getAdvisory(card(1)))?.summary).toBe(advisory(1).summary);
  });

  it('records all cards of a call or none of them', async () => {
    const store = memoryStore();
    await expect(
      store.recordAdvisories([advisory(1), advisory(2, { issuedAt: 'not a time' })]),
    ).rejects.toThrow(/issuedAt/);
    expect(await store.isEmpty()).toBe(true);
    expect((await store.listAdvisories({ limit: 10, offset: 0 })).total).toBe(0);
  });

  it('is empty until the first advisory, and stays not-empty after a purge removed it', async () => {
    const store = memoryStore();
    expect(await store.isEmpty()).toBe(true);
    await store.recordAdvisories([advisory(1)]);
    expect(await store.isEmpty()).toBe(false);
    await store.purge(new Date('2027-01-01T00:00:00Z'), RECEIVED);
    // The demo seeds only a store that never held anything, not one retention has emptied.
    expect(await store.isEmpty()).toBe(false);
  });
});

describe('openSqliteStore: the advisory list', () => {
  async function seeded(): Promise<Store> {
    const store = memoryStore();
    await store.recordAdvisories([
      advisory(1, { issuedAt: '2026-03-14T08:00:00Z' }),
      advisory(2, { issuedAt: '2026-03-14T09:00:00Z', ruleId: 'spo2-below-target', indicator: 'critical' }),
      advisory(3, { issuedAt: '2026-03-14T10:00:00Z', unit: EMERGENCY, patientKey: 'ffffffffffffffffffffffffffffffff' }),
      advisory(4, { issuedAt: '2026-03-14T11:00:00+01:00', ruleId: 'uncontrolled-oxygen-at-risk' }),
    ]);
    return store;
  }

  it('lists newest first by the instant issued, whatever offset the time was written in', async () => {
    const store = await seeded();
    const page = await store.listAdvisories({ limit: 10, offset: 0 });
    // 11:00+01:00 is 10:00Z, the same instant as card 3; a tie is broken by card uuid, descending
    expect(page.items.map((item) => item.cardUuid)).toStrictEqual([card(4), card(3), card(2), card(1)]);
    expect(page.total).toBe(4);
  });

  it('pages with limit and offset and still reports the total of all matches', async () => {
    const store = await seeded();
    const second = await store.listAdvisories({ limit: 2, offset: 2 });
    expect(second.items.map((item) => item.cardUuid)).toStrictEqual([card(2), card(1)]);
    expect(second.total).toBe(4);
  });

  it.each([
    [{ unit: EMERGENCY }, [3]],
    [{ unit: WARD_7 }, [4, 2, 1]],
    [{ ruleId: 'spo2-below-target' }, [2]],
    [{ indicator: 'critical' as const }, [2]],
    [{ patientKey: 'ffffffffffffffffffffffffffffffff' }, [3]],
    [{ from: '2026-03-14T09:00:00Z' }, [4, 3, 2]],
    [{ to: '2026-03-14T09:00:00Z' }, [1]],
    [{ from: '2026-03-14T09:00:00Z', to: '2026-03-14T10:00:00Z', unit: WARD_7 }, [2]],
  ])('filters by %j (from inclusive, to exclusive)', async (filter, expected) => {
    const store = await seeded();
    const page = await store.listAdvisories({ ...filter, limit: 10, offset: 0 });
    expect(page.items.map((item) => item.cardUuid)).toStrictEqual(expected.map(card));
    expect(page.total).toBe(expected.length);
  });

  it('filters by the latest outcome, by outcome time, not by the order feedback arrived', async () => {
    const store = await seeded();
    // card 1: overridden at 08:05, then (sent later, but decided earlier) accepted at 08:02
    await store.recordFeedback(EHR, [overridden(1, '2026-03-14T08:05:00Z')], RECEIVED, GENEROUS);
    await store.recordFeedback(EHR, [accepted(1, '2026-03-14T08:02:00Z')], new Date('2026-03-14T10:30:00Z'), GENEROUS);
    // card 2: accepted, then overridden later
    await store.recordFeedback(
      EHR,
      [accepted(2, '2026-03-14T09:01:00Z'), overridden(2, '2026-03-14T09:10:00Z', 'weaning-in-progress')],
      RECEIVED,
      GENEROUS,
    );
    // card 3: accepted only
    await store.recordFeedback(EHR, [accepted(3, '2026-03-14T10:01:00Z')], RECEIVED, GENEROUS);

    const ids = async (outcome: 'accepted' | 'overridden' | 'none'): Promise<string[]> =>
      (await store.listAdvisories({ outcome, limit: 10, offset: 0 })).items.map((item) => item.cardUuid);
    expect(await ids('overridden')).toStrictEqual([card(2), card(1)]);
    expect(await ids('accepted')).toStrictEqual([card(3)]);
    expect(await ids('none')).toStrictEqual([card(4)]);

    const listed = (await store.listAdvisories({ limit: 10, offset: 0 })).items;
    expect(listed.find((item) => item.cardUuid === card(2))).toMatchObject({
      latestOutcome: 'overridden',
      latestOverrideReasonCode: 'weaning-in-progress',
      feedbackCount: 2,
    });
    expect(listed.find((item) => item.cardUuid === card(4))).not.toHaveProperty('latestOutcome');
  });

  it('offers the units and rule ids on record as filter choices', async () => {
    const store = await seeded();
    const { unit: _unit, ...noUnit } = advisory(5);
    await store.recordAdvisories([noUnit]);
    expect(await store.facets()).toStrictEqual({
      units: [EMERGENCY, WARD_7],
      ruleIds: ['spo2-above-target', 'spo2-below-target', 'uncontrolled-oxygen-at-risk'],
    });
  });
});

describe('openSqliteStore: getAdvisory', () => {
  it('gives the feedback of the client the card was issued to, oldest outcome first', async () => {
    const store = memoryStore();
    await store.recordAdvisories([advisory(1)]);
    await store.recordFeedback(EHR, [overridden(1, '2026-03-14T09:50:00Z')], RECEIVED, GENEROUS);
    await store.recordFeedback(EHR, [accepted(1, '2026-03-14T09:45:00Z')], RECEIVED, GENEROUS);
    await store.recordFeedback(THEATRES, [accepted(1, '2026-03-14T09:55:00Z')], RECEIVED, GENEROUS);

    const found = await store.getAdvisory(card(1));
    expect(found?.feedback.map((f) => [f.outcome, f.outcomeTimestamp, f.knownCard])).toStrictEqual([
      ['accepted', '2026-03-14T09:45:00Z', true],
      ['overridden', '2026-03-14T09:50:00Z', true],
    ]);
    expect(found?.feedback[1]).toMatchObject({
      client: EHR,
      overrideReason: { system: 'urn:oxygen-order-checker:override-reason', code: 'patient-specific-target' },
      receivedAt: RECEIVED.toISOString(),
    });
  });
});

describe('openSqliteStore: summarise', () => {
  it('counts per rule and unit what was fired, accepted, overridden and left, by latest outcome', async () => {
    const store = memoryStore();
    await store.recordAdvisories([
      advisory(1),
      advisory(2),
      advisory(3),
      advisory(4),
      advisory(5, { unit: EMERGENCY }),
      advisory(6, { ruleId: 'news2-scale-2', indicator: 'info' }),
      advisory(7, { issuedAt: '2026-03-15T09:00:00Z' }),
    ]);
    await store.recordFeedback(
      EHR,
      [
        accepted(1, '2026-03-14T09:41:00Z'),
        overridden(2, '2026-03-14T09:41:00Z', 'weaning-in-progress'),
        overridden(3, '2026-03-14T09:41:00Z', 'weaning-in-progress'),
        // card 4 was overridden, then the clinician changed their mind and accepted it
        overridden(4, '2026-03-14T09:41:00Z', 'reading-not-representative'),
        accepted(4, '2026-03-14T09:44:00Z'),
        overridden(5, '2026-03-14T09:41:00Z', 'patient-specific-target'),
      ],
      RECEIVED,
      GENEROUS,
    );
    // Feedback from another client on card 1 is not the issuing client's and changes nothing.
    await store.recordFeedback(THEATRES, [overridden(1, '2026-03-14T09:59:00Z')], RECEIVED, GENEROUS);

    const summary = await store.summarise({ from: '2026-03-14T00:00:00Z', to: '2026-03-15T00:00:00Z' });
    expect(summary).toStrictEqual([
      { ruleId: 'news2-scale-2', unit: WARD_7, fired: 1, accepted: 0, overridden: 0, noFeedback: 1, overrideReasons: [] },
      {
        ruleId: 'spo2-above-target',
        unit: EMERGENCY,
        fired: 1,
        accepted: 0,
        overridden: 1,
        noFeedback: 0,
        overrideReasons: [{ code: 'patient-specific-target', count: 1 }],
      },
      {
        ruleId: 'spo2-above-target',
        unit: WARD_7,
        fired: 4,
        accepted: 2,
        overridden: 2,
        noFeedback: 0,
        overrideReasons: [{ code: 'weaning-in-progress', count: 2 }],
      },
    ]);
    const everything = await store.summarise({});
    expect(everything.find((row) => row.ruleId === 'spo2-above-target' && row.unit === WARD_7)?.fired).toBe(5);
  });

  it('groups advisories that named no unit under the empty unit', async () => {
    const store = memoryStore();
    const { unit: _unit, ...noUnit } = advisory(1);
    await store.recordAdvisories([noUnit]);
    expect(await store.summarise({})).toStrictEqual([
      { ruleId: 'spo2-above-target', unit: '', fired: 1, accepted: 0, overridden: 0, noFeedback: 1, overrideReasons: [] },
    ]);
  });
});

describe('openSqliteStore: purge by retention', () => {
  const CUTOFF = new Date('2026-03-14T00:00:00Z');
  const NOW = new Date('2026-04-13T00:00:00Z');

  it('removes advisories issued before the cutoff with all their feedback, and keeps the rest', async () => {
    const store = memoryStore();
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
    const store = memoryStore();
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
    const store = memoryStore();
    await store.recordFeedback(THEATRES, [accepted(8, '2026-03-13T09:00:00Z')], new Date('2026-03-13T09:00:00Z'), GENEROUS);
    await store.recordFeedback(THEATRES, [accepted(9, '2026-03-14T09:00:00Z')], new Date('2026-03-14T09:00:00Z'), GENEROUS);
    expect(await store.purge(CUTOFF, NOW)).toStrictEqual({ advisories: 0, feedback: 1, replayIds: 0 });
    expect((await store.listUnmatchedFeedback(10, 0)).items.map((f) => f.cardUuid)).toStrictEqual([card(9)]);
  });

  it('changes nothing when everything is inside the retention window', async () => {
    const store = memoryStore();
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

    const again = openSqliteStore({ file });
    open.push(again);
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

    const after = openSqliteStore({ file });
    open.push(after);
    const page = await after.listAdvisories({ outcome: 'accepted', limit: 1, offset: 0 });
    // every acknowledged card and its feedback is there; the one in flight may or may not be
    expect(page.total).toBeGreaterThanOrEqual(acknowledged);
    for (let n = 1; n <= acknowledged; n += 1) {
      expect((await after.getAdvisory(card(n)))?.feedback).toHaveLength(1);
    }
  });

  it('answers a closed store with a rejection, not a silent success', async () => {
    const store = openSqliteStore({ file: join(tempDir(), 'audit.sqlite') });
    await store.close();
    await expect(store.recordAdvisories([advisory(1)])).rejects.toThrow();
  });
});
