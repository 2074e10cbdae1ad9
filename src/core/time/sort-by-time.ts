/**
 * Sorts items by the instant their `at` names, parsing each time once. A comparator that calls
 * `Date.parse` parses two strings per comparison, n log n parses in all; this parses n. The order is
 * the comparator's exactly: the sort is stable, a time that does not parse compares as equal to any
 * other (as NaN did), and `tieBreak` decides between items at the same instant.
 */
export function sortByTime<T>(
  items: readonly T[],
  timeOf: (item: T) => string,
  order: 'oldest-first' | 'newest-first',
  tieBreak?: (a: T, b: T) => number,
): T[] {
  const timed = items.map((item) => ({ item, ms: Date.parse(timeOf(item)) }));
  const sign = order === 'oldest-first' ? 1 : -1;
  timed.sort((a, b) => sign * (a.ms - b.ms) || (tieBreak?.(a.item, b.item) ?? 0));
  return timed.map((t) => t.item);
}
