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

/** The local clock parts as Intl gives them: exact in every zone and era, but dear. */
function intlLocalParts(at: Date, timeZone: string): LocalParts {
  // One walk over the parts rather than a search per field; the first of each type counts.
  const found: Partial<Record<Intl.DateTimeFormatPartTypes, string>> = {};
  for (const part of formatterFor(timeZone).formatToParts(at)) {
    found[part.type] ??= part.value;
  }
  return { year: found.year ?? '', month: found.month ?? '', day: found.day ?? '', hour: found.hour ?? '', minute: found.minute ?? '' };
}

/** Numeric formatters, to the second, used only to learn a zone's offset from UTC. */
const OFFSET_FORMATTERS = new Map<string, Intl.DateTimeFormat>();

/**
 * How far the zone's wall clock is ahead of UTC at `ms`, in ms (whole seconds: old local mean times have
 * them). The review pages' times use it too (src/review/review-time.ts).
 */
export function offsetMsAt(ms: number, timeZone: string): number {
  let formatter = OFFSET_FORMATTERS.get(timeZone);
  if (formatter === undefined) {
    formatter = new Intl.DateTimeFormat('en-GB', {
      timeZone,
      year: 'numeric',
      month: 'numeric',
      day: 'numeric',
      hour: 'numeric',
      minute: 'numeric',
      second: 'numeric',
      hourCycle: 'h23',
    });
    OFFSET_FORMATTERS.set(timeZone, formatter);
  }
  const field: Partial<Record<Intl.DateTimeFormatPartTypes, number>> = {};
  for (const part of formatter.formatToParts(ms)) {
    field[part.type] ??= Number(part.value);
  }
  const wall = Date.UTC(field.year ?? 0, (field.month ?? 1) - 1, field.day ?? 1, field.hour ?? 0, field.minute ?? 0, field.second ?? 0);
  return wall - Math.floor(ms / 1000) * 1000;
}

const HOUR_MS = 3_600_000;
/** Hours kept per zone (about six months of them); the cache is emptied whole when it fills. */
const MAX_HOURS_KEPT = 4096;
/**
 * Per zone, the offset in force through each UTC hour seen, or `null` when it changes within that
 * hour. The same offset at an hour's first and last millisecond means none changed in between, as no
 * zone changes its clocks twice within one hour (tzdata, from memory); an hour that holds a change is
 * left to Intl.
 */
const STEADY_OFFSETS = new Map<string, Map<number, number | null>>();

function steadyOffsetMs(ms: number, timeZone: string): number | undefined {
  let byHour = STEADY_OFFSETS.get(timeZone);
  if (byHour === undefined) {
    byHour = new Map();
    STEADY_OFFSETS.set(timeZone, byHour);
  }
  const hour = Math.floor(ms / HOUR_MS);
  let offset = byHour.get(hour);
  if (offset === undefined) {
    const start = hour * HOUR_MS;
    const atStart = offsetMsAt(start, timeZone);
    offset = atStart === offsetMsAt(start + HOUR_MS - 1, timeZone) ? atStart : null;
    if (byHour.size >= MAX_HOURS_KEPT) {
      byHour.clear();
    }
    byHour.set(hour, offset);
  }
  return offset ?? undefined;
}

let monthNames: readonly string[] | undefined;

/** The short month names the formatter writes ("Sept" in en-GB), read from it once. */
function shortMonthNames(): readonly string[] {
  monthNames ??= Array.from({ length: 12 }, (_, month) => intlLocalParts(new Date(Date.UTC(2000, month, 15, 12)), 'UTC').month);
  return monthNames;
}

const twoDigits = (value: number): string => String(value).padStart(2, '0');

/**
 * The local clock parts of `at` in `timeZone`, as the en-GB formatter writes them. Intl is the
 * dearest step of a card (a formatToParts call per time), so the zone's offset is learnt once per UTC
 * hour and the parts are worked out from it; an hour in which the clocks change, and a year outside
 * four digits, are left to Intl. tests/cds/card-time.test.ts holds the two ways equal.
 */
function localParts(at: Date, timeZone: string): LocalParts {
  const ms = at.getTime();
  const offset = steadyOffsetMs(ms, timeZone);
  if (offset === undefined) {
    return intlLocalParts(at, timeZone);
  }
  const wall = new Date(ms + offset);
  const year = wall.getUTCFullYear();
  if (year < 1000 || year > 9999) {
    return intlLocalParts(at, timeZone);
  }
  return {
    year: String(year),
    month: shortMonthNames()[wall.getUTCMonth()] ?? '',
    day: String(wall.getUTCDate()),
    hour: twoDigits(wall.getUTCHours()),
    minute: twoDigits(wall.getUTCMinutes()),
  };
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
  return minutes === undefined ? undefined : agoText(minutes);
}

/** {@link formatAgo} of a time this many minutes before `now`. */
function agoText(minutes: number): string {
  return minutes < 0 ? 'later than this check' : `${formatDuration(minutes)} ago`;
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
      // Read once for the clock time and the time since, as formatWhen reads it twice.
      const atMs = Date.parse(atIso);
      if (Number.isNaN(atMs)) {
        text = whenText(undefined, undefined, atIso);
      } else {
        today ??= localParts(now, timeZone);
        text = whenText(clockTimeBeside(localParts(new Date(atMs), timeZone), today), agoText((now.getTime() - atMs) / 60_000), atIso);
      }
      shown.set(atIso, text);
    }
    return text;
  };
  return { now, timeZone, when };
}
