import { describe, expect, it } from 'vitest';
import { isNewestFirst, oldestFirst, readingMs, readWithin } from '../../../src/core/time/reading-time.js';
import { sortByTime } from '../../../src/core/time/sort-by-time.js';
import { newestFirst } from '../../../src/core/assessment/current-values.js';

/**
 * reading-time.ts lets the core skip sorts and re-parsing; it must give exactly what sortByTime and
 * `Date.parse` gave. The times are FHIR dateTime forms (FHIR R4 §2.24.0.1 dateTime: partial dates, a
 * zone offset required with a time); the items behind them are not clinical data.
 */

interface Item {
  readonly id: number;
  readonly at: string;
}

const TIMES = [
  '2026-11-30T09:25:00Z',
  '2026-11-30T09:25:00.000Z',
  '2026-11-30T10:25:00+01:00',
  '2026-11-30T03:55:00-05:30',
  '2026-11-30T09:25:30.5Z',
  '2026-11-30T09:26:00+00:00',
  '2026-11-30',
  '2026-12-01T00:00:00+14:00',
  '2026-11-29T23:59:59-12:00',
  'not a time',
];

/** A fixed shuffle of `count` items, with repeated instants and, when asked, unreadable times. */
function shuffled(count: number, unreadable: boolean): Item[] {
  const times = unreadable ? TIMES : TIMES.filter((t) => !Number.isNaN(Date.parse(t)));
  let seed = 11;
  const next = (): number => (seed = (seed * 16807) % 2147483647);
  return Array.from({ length: count }, (_, id) => ({ id, at: times[next() % times.length] ?? '' }));
}

/** Strictly newest first: one reading a quarter hour, as a ward chart might hold. */
function chart(count: number): Item[] {
  const start = Date.parse('2026-11-30T12:00:00Z');
  return Array.from({ length: count }, (_, id) => ({ id, at: new Date(start - id * 15 * 60_000).toISOString() }));
}

const ids = (list: readonly Item[]): number[] => list.map((item) => item.id);

describe('reading times', () => {
  it('parses each reading as Date.parse does, NaN for a time that does not parse', () => {
    for (const at of TIMES) {
      expect(readingMs({ at })).toStrictEqual(Date.parse(at));
    }
  });

  it('takes the epoch ms the fact reader gave a reading, and parses `at` only when there is none', () => {
    // A reading whose atMs disagrees with its text shows which one was read.
    expect(readingMs({ at: '2026-11-30T10:00:00Z', atMs: 42 })).toBe(42);
    expect(readingMs({ at: '2026-11-30T10:00:00Z' })).toBe(Date.parse('2026-11-30T10:00:00Z'));
  });

  it.each([
    ['shuffled, with ties and unreadable times', shuffled(200, true)],
    ['shuffled, readable times with ties', shuffled(200, false)],
    ['strictly newest first', chart(50)],
    ['newest first with ties', [...chart(10), ...chart(10)].sort((a, b) => Date.parse(b.at) - Date.parse(a.at))],
    ['oldest first', chart(30).reverse()],
    ['empty', []],
  ])('orders as sortByTime does (%s)', (_name, list) => {
    expect(ids(newestFirst(list))).toStrictEqual(ids(sortByTime(list, (i) => i.at, 'newest-first')));
    expect(ids(oldestFirst(list))).toStrictEqual(ids(sortByTime(list, (i) => i.at, 'oldest-first')));
  });

  it('says a list is newest first only when every time reads and none is later than the one before', () => {
    expect(isNewestFirst(chart(5))).toBe(true);
    expect(isNewestFirst(chart(5).reverse())).toBe(false);
    expect(isNewestFirst([{ at: '2026-11-30T10:00:00Z' }, { at: 'not a time' }])).toBe(false);
    expect(isNewestFirst([{ at: '2026-11-30T10:00:00Z' }, { at: '2026-11-30T11:00:00+01:00' }])).toBe(true);
  });

  it('leaves its input as it was', () => {
    const list = chart(5);
    oldestFirst(list);
    expect(ids(list)).toStrictEqual([0, 1, 2, 3, 4]);
  });

  it('counts a reading within the window as isWithin did: the edge in, a future time in, unreadable out', () => {
    const nowMs = Date.parse('2026-11-30T12:00:00Z');
    expect(readWithin({ at: '2026-11-30T11:00:00Z' }, nowMs, 60)).toBe(true);
    expect(readWithin({ at: '2026-11-30T10:59:59Z' }, nowMs, 60)).toBe(false);
    expect(readWithin({ at: '2026-11-30T12:05:00Z' }, nowMs, 60)).toBe(true);
    expect(readWithin({ at: 'not a time' }, nowMs, 60)).toBe(false);
  });
});
