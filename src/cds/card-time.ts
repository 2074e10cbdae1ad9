import { formatDuration, minutesBetween } from '../core/assessment/format.js';

/**
 * Times as a clinician on the ward reads them: the wall-clock time in the site's time zone
 * (`policy.site.timeZone`) and how long ago, e.g. "09:25 (15 min ago)", never a raw ISO 8601 string.
 * Pure: the clock comes in as `now`, and the zone is always explicit, so the host's zone never leaks
 * into a card.
 */

interface LocalParts {
  readonly year: string;
  readonly month: string;
  readonly day: string;
  readonly hour: string;
  readonly minute: string;
}

/**
 * One formatter per time zone: building an Intl.DateTimeFormat costs far more than using one (it was
 * a quarter of the time of replaying an export's orders), and a formatter holds no state between calls.
 */
const FORMATTERS = new Map<string, Intl.DateTimeFormat>();

function formatterFor(timeZone: string): Intl.DateTimeFormat {
  let formatter = FORMATTERS.get(timeZone);
  if (formatter === undefined) {
    formatter = new Intl.DateTimeFormat('en-GB', {
      timeZone,
      year: 'numeric',
      month: 'short',
      day: 'numeric',
      hour: '2-digit',
      minute: '2-digit',
      hourCycle: 'h23',
    });
    FORMATTERS.set(timeZone, formatter);
  }
  return formatter;
}

function localParts(at: Date, timeZone: string): LocalParts {
  const parts = formatterFor(timeZone).formatToParts(at);
  const part = (type: Intl.DateTimeFormatPartTypes): string => parts.find((p) => p.type === type)?.value ?? '';
  return { year: part('year'), month: part('month'), day: part('day'), hour: part('hour'), minute: part('minute') };
}

/**
 * The wall-clock time of `atIso` in `timeZone`: "09:25" on the same local day as `now`,
 * "29 Nov 21:10" on another day, "29 Nov 2025 21:10" in another year. Undefined when `atIso` is not
 * a readable time.
 */
export function formatClockTime(atIso: string, now: Date, timeZone: string): string | undefined {
  const at = new Date(Date.parse(atIso));
  if (Number.isNaN(at.getTime())) {
    return undefined;
  }
  const there = localParts(at, timeZone);
  const here = localParts(now, timeZone);
  const clock = `${there.hour}:${there.minute}`;
  if (there.year !== here.year) {
    return `${there.day} ${there.month} ${there.year} ${clock}`;
  }
  return there.month === here.month && there.day === here.day ? clock : `${there.day} ${there.month} ${clock}`;
}

/** "15 min ago", "3 h 10 min ago", "2 days ago"; "after this check" for a time later than `now`. */
export function formatAgo(atIso: string, now: Date): string | undefined {
  const minutes = minutesBetween(atIso, now);
  if (minutes === undefined) {
    return undefined;
  }
  if (minutes < 0) {
    return 'later than this check';
  }
  return `${formatDuration(minutes)} ago`;
}

/**
 * "at 09:25 (15 min ago)" in the site's zone. A time that cannot be read is shown as given, so the
 * reader still sees what the record said.
 */
export function formatWhen(atIso: string, now: Date, timeZone: string): string {
  const clock = formatClockTime(atIso, now, timeZone);
  const ago = formatAgo(atIso, now);
  if (clock === undefined || ago === undefined) {
    return `at ${atIso} (time not readable)`;
  }
  return `at ${clock} (${ago})`;
}
