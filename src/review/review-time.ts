import { offsetMsAt } from '../cds/card-time.js';

/**
 * Times on the review pages, always in the site's IANA time zone (`policy.site.timeZone`) and always
 * labelled with it, so a reader on a ward never has to guess whether a time is UTC. Pure: the zone
 * is passed in; the host's own zone is never used.
 */

function parts(at: Date, options: Intl.DateTimeFormatOptions): Record<string, string> {
  const out: Record<string, string> = {};
  for (const part of new Intl.DateTimeFormat('en-GB', options).formatToParts(at)) {
    out[part.type] = part.value;
  }
  return out;
}

function readInstant(iso: string): Date | undefined {
  const ms = Date.parse(iso);
  return Number.isNaN(ms) ? undefined : new Date(ms);
}

/**
 * "12 Jul 2026, 14:05 BST": day, time and the zone's short name as Intl gives it in en-GB (BST/GMT
 * for Europe/London, "GMT+10" style elsewhere). A time that cannot be read is shown as stored.
 */
export function formatReviewTime(iso: string, timeZone: string): string {
  const at = readInstant(iso);
  if (at === undefined) {
    return `${iso} (time not readable)`;
  }
  const p = parts(at, {
    timeZone,
    year: 'numeric',
    month: 'short',
    day: 'numeric',
    hour: '2-digit',
    minute: '2-digit',
    hourCycle: 'h23',
    timeZoneName: 'short',
  });
  return `${p['day']} ${p['month']} ${p['year']}, ${p['hour']}:${p['minute']} ${p['timeZoneName']}`;
}

/** "14:05" in the zone: for chart ticks, whose axis names the zone once. */
export function formatClock(at: Date, timeZone: string): string {
  const p = parts(at, { timeZone, hour: '2-digit', minute: '2-digit', hourCycle: 'h23' });
  return `${p['hour']}:${p['minute']}`;
}

/** "12 Jul": the local day, for a chart tick that crosses midnight. */
export function formatDay(at: Date, timeZone: string): string {
  const p = parts(at, { timeZone, month: 'short', day: 'numeric' });
  return `${p['day']} ${p['month']}`;
}

/** The zone's offset from UTC at an instant, in minutes (east positive). */
export function zoneOffsetMinutes(at: Date, timeZone: string): number {
  return Math.round(offsetMsAt(at.getTime(), timeZone) / 60_000);
}

/**
 * The instant local midnight begins on `year-month-day` in the zone. The offset is looked up at the
 * guess and once more at the result, which settles days on which the clocks change.
 */
export function startOfLocalDay(year: number, month: number, day: number, timeZone: string): Date {
  const wall = Date.UTC(year, month - 1, day);
  let instant = wall - zoneOffsetMinutes(new Date(wall), timeZone) * 60_000;
  instant = wall - zoneOffsetMinutes(new Date(instant), timeZone) * 60_000;
  return new Date(instant);
}

/** True when Intl knows the zone name (an IANA name such as `Europe/London`). */
export function isKnownTimeZone(timeZone: string): boolean {
  try {
    new Intl.DateTimeFormat('en-GB', { timeZone });
    return true;
  } catch {
    return false;
  }
}
