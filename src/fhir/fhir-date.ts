/**
 * FHIR date and dateTime values (YYYY, YYYY-MM, YYYY-MM-DD, or a full time with zone), read without
 * the host's time zone so the result does not depend on the server.
 */

const DATE_TIME =
  /^(\d{4})(?:-(\d{2})(?:-(\d{2})(?:T(\d{2}):(\d{2})(?::(\d{2})(?:\.(\d{1,9}))?)?(Z|[+-]\d{2}:\d{2})?)?)?)?$/;

export type DatePrecision = 'year' | 'month' | 'day' | 'time';

export interface FhirInstant {
  /** Epoch milliseconds of the start of the stated period (a partial date is its first moment, UTC). */
  readonly startMs: number;
  /** Epoch milliseconds of the end of the stated period (for a full time, the same instant). */
  readonly endMs: number;
  readonly precision: DatePrecision;
}

/**
 * Days in a month (1-12) of the proleptic Gregorian calendar, as Date.UTC counts them; Date.UTC reads
 * a year 0-99 as 1900-1999, so year 0000 counts as 1900, which was not a leap year.
 */
function daysInMonth(year: number, month: number): number {
  if (month === 2) {
    const y = year <= 99 ? 1900 + year : year;
    const leap = (y % 4 === 0 && y % 100 !== 0) || y % 400 === 0;
    return leap ? 29 : 28;
  }
  return month === 4 || month === 6 || month === 9 || month === 11 ? 30 : 31;
}

function inRange(n: number, low: number, high: number): boolean {
  return Number.isInteger(n) && n >= low && n <= high;
}

/**
 * Parses a FHIR date or dateTime. A time without a zone is not valid FHIR; it is read as UTC rather
 * than as server-local time. Returns undefined for anything else (including impossible dates).
 */
export function parseFhirDateTime(value: unknown): FhirInstant | undefined {
  if (typeof value !== 'string') {
    return undefined;
  }
  if (isUtcInstant(value)) {
    return timeInstant(
      digitsAt(value, 0, 4),
      digitsAt(value, 5, 2),
      digitsAt(value, 8, 2),
      digitsAt(value, 11, 2),
      digitsAt(value, 14, 2),
      digitsAt(value, 17, 2),
      value.length === WITH_MILLISECONDS ? digitsAt(value, 20, 3) : 0,
      0,
    );
  }
  const m = DATE_TIME.exec(value.trim());
  if (m === null) {
    return undefined;
  }
  const year = Number(m[1]);
  const month = m[2] === undefined ? undefined : Number(m[2]);
  const day = m[3] === undefined ? undefined : Number(m[3]);
  if (month !== undefined && !inRange(month, 1, 12)) {
    return undefined;
  }
  if (month === undefined) {
    return {
      startMs: Date.UTC(year, 0, 1),
      endMs: Date.UTC(year + 1, 0, 1) - 1,
      precision: 'year',
    };
  }
  if (day === undefined) {
    return {
      startMs: Date.UTC(year, month - 1, 1),
      endMs: Date.UTC(year, month, 1) - 1,
      precision: 'month',
    };
  }
  if (m[4] === undefined) {
    // Counted, not read back from a Date: this runs for every time of every resource read.
    if (!inRange(day, 1, daysInMonth(year, month))) {
      return undefined;
    }
    return {
      startMs: Date.UTC(year, month - 1, day),
      endMs: Date.UTC(year, month - 1, day + 1) - 1,
      precision: 'day',
    };
  }
  const fraction = m[7] === undefined ? 0 : Number(`0.${m[7]}`) * 1000;
  const zone = m[8] ?? 'Z';
  const sign = zone.startsWith('-') ? -1 : 1;
  const offsetMin = zone === 'Z' ? 0 : sign * (Number(zone.slice(1, 3)) * 60 + Number(zone.slice(4, 6)));
  const second = m[6] === undefined ? 0 : Number(m[6]);
  return timeInstant(year, month, day, Number(m[4]), Number(m[5]), second, fraction, offsetMin);
}

/** A full time's instant, or undefined when a field is out of range. */
function timeInstant(
  year: number,
  month: number,
  day: number,
  hour: number,
  minute: number,
  second: number,
  fractionMs: number,
  offsetMin: number,
): FhirInstant | undefined {
  if (!inRange(month, 1, 12) || !inRange(day, 1, daysInMonth(year, month))) {
    return undefined;
  }
  if (!inRange(hour, 0, 23) || !inRange(minute, 0, 59) || !inRange(second, 0, 60)) {
    return undefined;
  }
  const ms = Date.UTC(year, month - 1, day, hour, minute, second) + fractionMs - offsetMin * 60_000;
  return { startMs: ms, endMs: ms, precision: 'time' };
}

const ZERO = 48;
const NINE = 57;

/** The lengths of `YYYY-MM-DDThh:mm:ssZ` and of `YYYY-MM-DDThh:mm:ss.sssZ` (what toISOString writes). */
const TO_THE_SECOND = 20;
const WITH_MILLISECONDS = 24;

/**
 * Whether the value is written `YYYY-MM-DDThh:mm:ssZ` or `YYYY-MM-DDThh:mm:ss.sssZ`, the forms nearly
 * every time arrives in; it is read from its characters, without the regular expression, to the same
 * instant the expression gives (three fraction digits d make `Number("0.d") * 1000` exactly d).
 */
function isUtcInstant(value: string): boolean {
  if (value.length !== TO_THE_SECOND && value.length !== WITH_MILLISECONDS) {
    return false;
  }
  const last = value.length - 1;
  for (let i = 0; i < last; i += 1) {
    const c = value.charCodeAt(i);
    const separator = i === 4 || i === 7 ? '-' : i === 10 ? 'T' : i === 13 || i === 16 ? ':' : i === 19 ? '.' : undefined;
    if (separator === undefined ? c < ZERO || c > NINE : value[i] !== separator) {
      return false;
    }
  }
  return value[last] === 'Z';
}

/** The number written by `count` ASCII digits from `start` (checked by isUtcInstant). */
function digitsAt(value: string, start: number, count: number): number {
  let n = 0;
  for (let i = start; i < start + count; i += 1) {
    n = n * 10 + (value.charCodeAt(i) - ZERO);
  }
  return n;
}

/** A full time (hours and minutes) with no zone: `2026-03-01T08:15`, `2026-03-01T08:15:00.5`. */
const TIME_WITHOUT_ZONE = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(?::\d{2}(?:\.\d{1,9})?)?$/;

/**
 * The time as the facts carry it: a full time with no zone gets "Z", so that every later reading
 * (the core's `Date.parse` among them) takes it as UTC, as `parseFhirDateTime` does, and not as the
 * host's local time, which would make an answer depend on the server's time zone. Anything else is
 * returned as given: FHIR R4's dateTime says "if hours and minutes are specified, a time zone SHALL
 * be populated", so valid data is never changed.
 */
export function withUtcIfZoneless(value: string | undefined): string | undefined {
  if (value === undefined) {
    return undefined;
  }
  // A zoneless time ends in a digit; a time that ends in "Z" or anything else is not scanned.
  const last = value.charCodeAt(value.length - 1);
  return last >= ZERO && last <= NINE && TIME_WITHOUT_ZONE.test(value) ? `${value}Z` : value;
}

/** A short plain age for notes: "95 min", "9 h", "3 d". */
export function describeAge(ageMs: number): string {
  const minutes = Math.round(ageMs / 60_000);
  if (minutes < 120) {
    return `${minutes} min`;
  }
  const hours = Math.round(minutes / 60);
  if (hours < 48) {
    return `${hours} h`;
  }
  return `${Math.round(hours / 24)} d`;
}
