import { describe, expect, it } from 'vitest';
import { sortByTime } from '../../../src/core/time/sort-by-time.js';

/**
 * sortByTime replaces comparators that called Date.parse on both sides of every comparison; it must
 * give their order exactly. The times are FHIR dateTime forms (FHIR R4 §2.24.0.1 dateTime: partial
 * dates, a zone offset required with a time); the patients behind them are not clinical data.
 */

interface Item {
  readonly id: number;
  readonly at: string;
  readonly onOxygen: boolean;
}

const TIMES = [
  '2026-11-30T09:25:00Z',
  '2026-11-30T09:25:00.000Z',
  '2026-11-30T10:25:00+01:00',
  '2026-11-30T03:55:00-05:30',
  '2026-11-30T09:25:30.5Z',
  '2026-11-30T09:26:00+00:00',
  '2026-11-30',
  '2026-11',
  '2026',
  '2026-12-01T00:00:00+14:00',
  '2026-11-29T23:59:59-12:00',
  'not a time',
  '',
];

/** A fixed shuffle of many items, with repeated instants, so ties and unreadable times both occur. */
function items(count: number): Item[] {
  let seed = 7;
  const next = (): number => (seed = (seed * 16807) % 2147483647);
  return Array.from({ length: count }, (_, id) => ({ id, at: TIMES[next() % TIMES.length] ?? '', onOxygen: next() % 2 === 0 }));
}

const byOxygen = (a: Item, b: Item): number => Number(a.onOxygen) - Number(b.onOxygen);

describe('sortByTime', () => {
  it.each([10, 200, 1000])('gives the order of the parsing comparators it replaces (%i items)', (count) => {
    const list = items(count);
    const ids = (sorted: readonly Item[]): number[] => sorted.map((item) => item.id);
    expect(ids(sortByTime(list, (i) => i.at, 'oldest-first'))).toStrictEqual(
      ids([...list].sort((a, b) => Date.parse(a.at) - Date.parse(b.at))),
    );
    expect(ids(sortByTime(list, (i) => i.at, 'newest-first'))).toStrictEqual(
      ids([...list].sort((a, b) => Date.parse(b.at) - Date.parse(a.at))),
    );
    expect(ids(sortByTime(list, (i) => i.at, 'oldest-first', byOxygen))).toStrictEqual(
      ids([...list].sort((a, b) => Date.parse(a.at) - Date.parse(b.at) || byOxygen(a, b))),
    );
  });

  it('puts readable times in time order, whatever their zone or precision', () => {
    const readable = TIMES.filter((t) => !Number.isNaN(Date.parse(t))).map((at, id) => ({ id, at, onOxygen: false }));
    const sorted = sortByTime(readable, (i) => i.at, 'oldest-first').map((i) => Date.parse(i.at));
    expect(sorted).toStrictEqual([...sorted].sort((a, b) => a - b));
    expect(sorted.length).toBeGreaterThan(8);
  });

  describe('edge cases', () => {
    it('leaves the input alone and keeps items at the same instant in their order', () => {
      const list: Item[] = [
        { id: 1, at: '2026-11-30T10:25:00+01:00', onOxygen: true },
        { id: 2, at: '2026-11-30T09:25:00Z', onOxygen: false },
      ];
      expect(sortByTime(list, (i) => i.at, 'newest-first').map((i) => i.id)).toStrictEqual([1, 2]);
      expect(sortByTime(list, (i) => i.at, 'oldest-first', byOxygen).map((i) => i.id)).toStrictEqual([2, 1]);
      expect(list.map((i) => i.id)).toStrictEqual([1, 2]);
    });

    it('sorts nothing into nothing', () => {
      expect(sortByTime([], (i: Item) => i.at, 'oldest-first')).toStrictEqual([]);
    });
  });
});
