import { afterEach, describe, expect, it } from 'vitest';
import { withUtcIfZoneless } from '../../src/fhir/fhir-date.js';
import { requestMoment } from '../../src/cli/retime-request.js';
import { copyOf, evaluateExample, loadExampleRequests, type RequestBody } from '../cds/support/examples.js';

/**
 * A time with no zone is not valid FHIR (R4 datatypes, dateTime: "if hours and minutes are
 * specified, a time zone SHALL be populated"), but EHRs send them. The service reads one as UTC at
 * the edge; the answer must then not depend on the time zone of the host it runs on.
 */

describe('withUtcIfZoneless', () => {
  it('gives a full time with no zone a "Z", at every precision FHIR allows', () => {
    expect(withUtcIfZoneless('2026-03-01T08:15')).toBe('2026-03-01T08:15Z');
    expect(withUtcIfZoneless('2026-03-01T08:15:30')).toBe('2026-03-01T08:15:30Z');
    expect(withUtcIfZoneless('2026-03-01T08:15:30.125')).toBe('2026-03-01T08:15:30.125Z');
  });

  it('leaves a time with a zone, a date, a partial date, nonsense and nothing as they are', () => {
    for (const value of ['2026-03-01T08:15:30Z', '2026-03-01T08:15:30+05:30', '2026-03-01T08:15:30.1-04:00', '2026-03-01', '2026-03', '2026', 'soon', '']) {
      expect(withUtcIfZoneless(value)).toBe(value);
    }
    expect(withUtcIfZoneless(undefined)).toBeUndefined();
  });
});

const FULL_TIME_WITH_ZONE = /^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}(:\d{2}(\.\d+)?)?(Z|[+-]\d{2}:\d{2})$/;

/** The request with every full time written as its UTC instant with the zone left off. */
function zonesDropped(value: unknown): unknown {
  if (typeof value === 'string') {
    return FULL_TIME_WITH_ZONE.test(value) ? new Date(value).toISOString().slice(0, -1) : value;
  }
  if (Array.isArray(value)) {
    return value.map(zonesDropped);
  }
  if (value !== null && typeof value === 'object') {
    return Object.fromEntries(Object.entries(value).map(([key, inner]) => [key, zonesDropped(inner)]));
  }
  return value;
}

const HOST_ZONES = ['UTC', 'America/New_York', 'Asia/Kolkata', 'Pacific/Chatham'];
const originalZone = process.env['TZ'];

async function answerIn(zone: string, body: RequestBody, now: Date): Promise<string> {
  // Node applies a change of TZ to Date at once, so one process can play hosts in several zones.
  process.env['TZ'] = zone;
  return JSON.stringify((await evaluateExample(body, { now })).response);
}

describe('an example sent with its zones left off', () => {
  afterEach(() => {
    if (originalZone === undefined) delete process.env['TZ'];
    else process.env['TZ'] = originalZone;
  });

  it('this process really changes zone when TZ changes (else the checks below prove nothing)', () => {
    process.env['TZ'] = 'Asia/Kolkata';
    expect(new Date(Date.UTC(2026, 0, 1)).getHours()).toBe(5); // IANA tz database: India is UTC+05:30
    process.env['TZ'] = 'UTC';
    expect(new Date(Date.UTC(2026, 0, 1)).getHours()).toBe(0);
  });

  it.each(loadExampleRequests().map((e) => [e.file, e.body] as const))('%s gets the same answer on a host in any zone', async (_file, body) => {
    const zoneless = zonesDropped(copyOf(body)) as RequestBody;
    const now = requestMoment(body) ?? new Date(Number.NaN);
    const answers = new Map<string, string>();
    for (const zone of HOST_ZONES) {
      answers.set(zone, await answerIn(zone, zoneless, now));
    }
    for (const zone of HOST_ZONES) {
      expect(answers.get(zone), zone).toBe(answers.get('UTC'));
    }
    // Read as UTC, the instants are the example's own: the same advice as the valid request.
    const rules = (answer: string | undefined): string[] =>
      (JSON.parse(answer ?? '{}') as { cards: { source: { topic?: { code?: string } } }[] }).cards.map((c) => c.source.topic?.code ?? '');
    expect(rules(answers.get('UTC'))).toEqual(rules(await answerIn('UTC', body, now)));
  });
});
