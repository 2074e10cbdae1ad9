import { sortByTime } from './sort-by-time.js';

/**
 * The instant a reading's `at` names, in epoch milliseconds (NaN when it does not parse). The one place
 * the core turns a reading's time into a number: times with no zone were given a "Z" where the facts
 * were read (fhir-date.ts), so the answer does not depend on the host's zone. The fact reader gives
 * each reading its `atMs` (the same `Date.parse`, done once); a reading made by hand without one is
 * parsed here. Not remembered per reading: a WeakMap entry per reading cost more (in allocation and
 * garbage collection) than the parses it saved.
 */
export function readingMs(reading: { readonly at: string; readonly atMs?: number }): number {
  return reading.atMs ?? Date.parse(reading.at);
}

/**
 * True when `items` are already newest first by time, every time readable: the order the fact reader
 * promises. A stable sort of such a list returns it unchanged, so callers can skip the sort.
 */
export function isNewestFirst(items: readonly { readonly at: string }[]): boolean {
  let previous = Number.POSITIVE_INFINITY;
  for (const item of items) {
    const ms = readingMs(item);
    if (Number.isNaN(ms) || ms > previous) {
      return false;
    }
    previous = ms;
  }
  return true;
}

/** True when `reading` is no older than `windowMinutes` before `nowMs` (a slightly future time counts). */
export function readWithin(reading: { readonly at: string }, nowMs: number, windowMinutes: number): boolean {
  const ms = readingMs(reading);
  return !Number.isNaN(ms) && (nowMs - ms) / 60_000 <= windowMinutes;
}

/**
 * `items` oldest first, as `sortByTime(items, at, 'oldest-first')` orders them. A list strictly newest
 * first (the reader's order, no two at one instant) is simply reversed; ties or unreadable times take
 * the stable sort, which keeps tied items in their given order.
 */
export function oldestFirst<T extends { readonly at: string }>(items: readonly T[]): T[] {
  let previous = Number.POSITIVE_INFINITY;
  for (const item of items) {
    const ms = readingMs(item);
    if (Number.isNaN(ms) || ms >= previous) {
      return sortByTime(items, (each) => each.at, 'oldest-first');
    }
    previous = ms;
  }
  return [...items].reverse();
}
