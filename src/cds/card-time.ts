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
  // One walk over the parts rather than a search per field; the first of each type counts.
  const found: Partial<Record<Intl.DateTimeFormatPartTypes, string>> = {};
  for (const part of formatterFor(timeZone).formatToParts(at)) {
    found[part.type] ??= part.value;
  }
  return { year: found.year ?? '', month: found.month ?? '', day: found.day ?? '', hour: found.hour ?? '', minute: found.minute ?? '' };
}

/** "09:25", "29 Nov 21:10" or "29 Nov 2025 21:10" as `there` reads beside `here` (see formatClockTime). */
function clockTimeBeside(there: LocalParts, here: LocalParts): string {
  const clock = `${there.hour}:${there.minute}`;
  if (there.year !== here.year) {
    return `${there.day} ${there.month} ${there.year} ${clock}`;
  }
  return there.month === here.month && there.day === here.day ? clock : `${there.day} ${there.month} ${clock}`;
}

function readTime(atIso: string): Date | undefined {
  const at = new Date(Date.parse(atIso));
  return Number.isNaN(at.getTime()) ? undefined : at;
}

/**
 * The wall-clock time of `atIso` in `timeZone`: "09:25" on the same local day as `now`,
 * "29 Nov 21:10" on another day, "29 Nov 2025 21:10" in another year. Undefined when `atIso` is not
 * a readable time.
 */
export function formatClockTime(atIso: string, now: Date, timeZone: string): string | undefined {
  const at = readTime(atIso);
  return at === undefined ? undefined : clockTimeBeside(localParts(at, timeZone), localParts(now, timeZone));
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

function whenText(clock: string | undefined, ago: string | undefined, atIso: string): string {
  return clock === undefined || ago === undefined ? `at ${atIso} (time not readable)` : `at ${clock} (${ago})`;
}

/**
 * "at 09:25 (15 min ago)" in the site's zone. A time that cannot be read is shown as given, so the
 * reader still sees what the record said.
 */
export function formatWhen(atIso: string, now: Date, timeZone: string): string {
  return whenText(formatClockTime(atIso, now, timeZone), formatAgo(atIso, now), atIso);
}

/** The clock of one hook call and the zone its times are shown in (`policy.site.timeZone`). */
export interface CardClock {
  readonly now: Date;
  readonly timeZone: string;
  /** {@link formatWhen} against this clock. */
  readonly when: (atIso: string) => string;
}

/**
 * A clock for one call. Every card of a call shows the same few readings against the same `now`, and
 * reading local time through Intl is the dear part, so `now`'s local day is read once and each time is
 * formatted once per call; the texts are those of {@link formatWhen}.
 */
export function cardClock(now: Date, timeZone: string): CardClock {
  let today: LocalParts | undefined;
  const shown = new Map<string, string>();
  const when = (atIso: string): string => {
    let text = shown.get(atIso);
    if (text === undefined) {
      const at = readTime(atIso);
      today ??= localParts(now, timeZone);
      const clock = at === undefined ? undefined : clockTimeBeside(localParts(at, timeZone), today);
      text = whenText(clock, formatAgo(atIso, now), atIso);
      shown.set(atIso, text);
    }
    return text;
  };
  return { now, timeZone, when };
}
