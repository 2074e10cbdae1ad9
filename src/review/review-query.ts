import type { AdvisoryOutcomeFilter, AdvisoryQuery, StoredIndicator, SummaryQuery } from '../store/store.js';
import { startOfLocalDay } from './review-time.js';

/**
 * The review pages' and API's query parameters, read once for both: filters by unit, rule,
 * indicator, latest outcome and time, and paging. Unknown parameters are ignored; a value that does
 * not read is an issue naming its parameter, and the value itself is never echoed. Pure: `now` and
 * the site zone come in.
 */

export const INDICATORS: readonly StoredIndicator[] = ['info', 'warning', 'critical'];
export const OUTCOMES: readonly AdvisoryOutcomeFilter[] = ['accepted', 'overridden', 'none'];

/** Time windows offered on the form, back from now, in hours. */
export const WINDOWS = { '12h': 12, '24h': 24, '72h': 72, '7d': 168, '30d': 720 } as const;
export type TimeWindow = keyof typeof WINDOWS;

export const DEFAULT_PAGE_SIZE = 25;
export const MAX_PAGE_SIZE = 200;
const MAX_PAGE = 100_000;
const MAX_TEXT = 100;
const RULE_ID = /^[a-z0-9]+(?:-[a-z0-9]+)*$/;
const LOCAL_DAY = /^(\d{4})-(\d{2})-(\d{2})$/;
/** RFC 3339 date-time with a zone designator: an instant, never a wall time of unknown zone. */
const INSTANT = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(?::\d{2}(?:\.\d{1,9})?)?(?:Z|[+-]\d{2}:\d{2})$/i;
const HOUR_MS = 3_600_000;

export interface QueryIssue {
  /** The query parameter at fault. */
  readonly path: string;
  readonly message: string;
}

/** The time filters as the reader gave them (to fill the form and page links again). */
export interface TimeFilters {
  readonly window?: TimeWindow;
  readonly from?: string;
  readonly to?: string;
}

export interface ListFilters extends TimeFilters {
  readonly unit?: string;
  /** A patient key (src/store/patient-key.ts): one patient's advisories, nobody named. */
  readonly patient?: string;
  readonly rule?: string;
  readonly indicator?: StoredIndicator;
  readonly outcome?: AdvisoryOutcomeFilter;
  readonly page: number;
  readonly pageSize: number;
}

export type Parsed<F, Q> =
  | { readonly kind: 'ok'; readonly filters: F; readonly query: Q }
  | { readonly kind: 'invalid'; readonly issues: readonly QueryIssue[] };

export interface QueryContext {
  readonly now: Date;
  readonly timeZone: string;
}

type Raw = Readonly<Record<string, unknown>>;

/** One text value, or undefined when absent or empty (an empty form field means "any"). */
function single(raw: Raw, name: string, issues: QueryIssue[]): string | undefined {
  const value = raw[name];
  if (value === undefined) {
    return undefined;
  }
  if (typeof value !== 'string') {
    issues.push({ path: name, message: 'give one value' });
    return undefined;
  }
  const trimmed = value.trim();
  return trimmed === '' ? undefined : trimmed;
}

function oneOf<T extends string>(raw: Raw, name: string, allowed: readonly T[], issues: QueryIssue[]): T | undefined {
  const value = single(raw, name, issues);
  if (value === undefined) {
    return undefined;
  }
  if (!(allowed as readonly string[]).includes(value)) {
    issues.push({ path: name, message: `must be one of ${allowed.join(', ')}` });
    return undefined;
  }
  return value as T;
}

function wholeNumber(raw: Raw, name: string, fallback: number, max: number, issues: QueryIssue[]): number {
  const value = single(raw, name, issues);
  if (value === undefined) {
    return fallback;
  }
  if (!/^\d{1,7}$/.test(value) || Number(value) < 1 || Number(value) > max) {
    issues.push({ path: name, message: `must be a whole number from 1 to ${max}` });
    return fallback;
  }
  return Number(value);
}

/** A local day (`2026-07-12`, in the site zone) or an instant with a zone (`2026-07-12T06:00:00Z`). */
function readTime(text: string, end: boolean, timeZone: string): Date | undefined {
  const day = LOCAL_DAY.exec(text);
  if (day !== null) {
    const [year, month, date] = [Number(day[1]), Number(day[2]), Number(day[3])];
    const check = new Date(Date.UTC(year, month - 1, date));
    if (check.getUTCFullYear() !== year || check.getUTCMonth() !== month - 1 || check.getUTCDate() !== date) {
      return undefined;
    }
    // `to` names the last day wanted, so the window runs to the start of the day after it.
    return end ? startOfLocalDay(year, month, date + 1, timeZone) : startOfLocalDay(year, month, date, timeZone);
  }
  if (!INSTANT.test(text)) {
    return undefined;
  }
  const ms = Date.parse(text);
  return Number.isNaN(ms) ? undefined : new Date(ms);
}

const TIME_MESSAGE = 'must be a date (YYYY-MM-DD, a day in the site time zone) or a time with its zone (e.g. 2026-07-12T06:00:00Z)';

function readTimeFilters(raw: Raw, context: QueryContext, issues: QueryIssue[]): { filters: TimeFilters; from?: string; to?: string } {
  const window = oneOf(raw, 'window', Object.keys(WINDOWS) as TimeWindow[], issues);
  const fromText = single(raw, 'from', issues);
  const toText = single(raw, 'to', issues);
  const from = fromText === undefined ? undefined : readTime(fromText, false, context.timeZone);
  const to = toText === undefined ? undefined : readTime(toText, true, context.timeZone);
  if (fromText !== undefined && from === undefined) {
    issues.push({ path: 'from', message: TIME_MESSAGE });
  }
  if (toText !== undefined && to === undefined) {
    issues.push({ path: 'to', message: TIME_MESSAGE });
  }
  if (window !== undefined && (fromText !== undefined || toText !== undefined)) {
    issues.push({ path: 'window', message: 'give either a window or from/to, not both' });
  }
  if (from !== undefined && to !== undefined && from.getTime() >= to.getTime()) {
    issues.push({ path: 'to', message: 'must be later than from' });
  }
  const filters: TimeFilters = {
    ...(window === undefined ? {} : { window }),
    ...(fromText === undefined ? {} : { from: fromText }),
    ...(toText === undefined ? {} : { to: toText }),
  };
  if (window !== undefined) {
    return { filters, from: new Date(context.now.getTime() - WINDOWS[window] * HOUR_MS).toISOString() };
  }
  return {
    filters,
    ...(from === undefined ? {} : { from: from.toISOString() }),
    ...(to === undefined ? {} : { to: to.toISOString() }),
  };
}

function readText(raw: Raw, name: string, issues: QueryIssue[], pattern?: RegExp): string | undefined {
  const value = single(raw, name, issues);
  if (value === undefined) {
    return undefined;
  }
  // eslint-disable-next-line no-control-regex -- control characters have no place in a filter
  if (value.length > MAX_TEXT || /[\u0000-\u001f\u007f]/.test(value) || (pattern !== undefined && !pattern.test(value))) {
    issues.push({
      path: name,
      message: pattern === undefined ? `must be plain text of at most ${MAX_TEXT} characters` : 'must be a rule id (kebab-case)',
    });
    return undefined;
  }
  return value;
}

/** A patient key is lower-case hex (src/store/patient-key.ts); anything else cannot match one. */
const PATIENT_KEY = /^[0-9a-f]{8,64}$/;

function readPatientKey(raw: Raw, issues: QueryIssue[]): string | undefined {
  const value = single(raw, 'patient', issues);
  if (value !== undefined && !PATIENT_KEY.test(value)) {
    issues.push({ path: 'patient', message: 'must be a patient key as shown on an advisory page (hexadecimal)' });
    return undefined;
  }
  return value;
}

/** The list page's and `GET /review/api/advisories`' parameters. */
export function parseListQuery(raw: Raw, context: QueryContext): Parsed<ListFilters, AdvisoryQuery> {
  const issues: QueryIssue[] = [];
  const unit = readText(raw, 'unit', issues);
  const patient = readPatientKey(raw, issues);
  const rule = readText(raw, 'rule', issues, RULE_ID);
  const indicator = oneOf(raw, 'indicator', INDICATORS, issues);
  const outcome = oneOf(raw, 'outcome', OUTCOMES, issues);
  const time = readTimeFilters(raw, context, issues);
  const page = wholeNumber(raw, 'page', 1, MAX_PAGE, issues);
  const pageSize = wholeNumber(raw, 'pageSize', DEFAULT_PAGE_SIZE, MAX_PAGE_SIZE, issues);
  if (issues.length > 0) {
    return { kind: 'invalid', issues };
  }
  const filters: ListFilters = {
    ...(unit === undefined ? {} : { unit }),
    ...(patient === undefined ? {} : { patient }),
    ...(rule === undefined ? {} : { rule }),
    ...(indicator === undefined ? {} : { indicator }),
    ...(outcome === undefined ? {} : { outcome }),
    ...time.filters,
    page,
    pageSize,
  };
  const query: AdvisoryQuery = {
    ...(unit === undefined ? {} : { unit }),
    ...(patient === undefined ? {} : { patientKey: patient }),
    ...(rule === undefined ? {} : { ruleId: rule }),
    ...(indicator === undefined ? {} : { indicator }),
    ...(outcome === undefined ? {} : { outcome }),
    ...(time.from === undefined ? {} : { from: time.from }),
    ...(time.to === undefined ? {} : { to: time.to }),
    limit: pageSize,
    offset: (page - 1) * pageSize,
  };
  return { kind: 'ok', filters, query };
}

/** The summary page's and `GET /review/api/summary`' parameters: the time window only. */
export function parseSummaryQuery(raw: Raw, context: QueryContext): Parsed<TimeFilters, SummaryQuery> {
  const issues: QueryIssue[] = [];
  const time = readTimeFilters(raw, context, issues);
  if (issues.length > 0) {
    return { kind: 'invalid', issues };
  }
  const query: SummaryQuery = {
    ...(time.from === undefined ? {} : { from: time.from }),
    ...(time.to === undefined ? {} : { to: time.to }),
  };
  return { kind: 'ok', filters: time.filters, query };
}

/** The query string for a page link that keeps the filters: `?unit=Ward%207&page=2`. */
export function filterQueryString(filters: ListFilters | TimeFilters, page?: number): string {
  const params = new URLSearchParams();
  for (const name of ['unit', 'patient', 'rule', 'indicator', 'outcome', 'window', 'from', 'to'] as const) {
    const value = (filters as Partial<Record<string, string>>)[name];
    if (value !== undefined) {
      params.set(name, value);
    }
  }
  if ('pageSize' in filters && filters.pageSize !== DEFAULT_PAGE_SIZE) {
    params.set('pageSize', String(filters.pageSize));
  }
  if (page !== undefined && page > 1) {
    params.set('page', String(page));
  }
  const text = params.toString();
  return text === '' ? '' : `?${text}`;
}
