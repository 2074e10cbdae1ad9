import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { describeAge, parseFhirDateTime } from '../../src/fhir/fhir-date.js';

describe('parseFhirDateTime', () => {
  // FHIR R4 date/dateTime formats (hl7.org/fhir/R4/datatypes.html; from memory)
  it.each([
    ['2026-12-01T10:30:00Z', '2026-12-01T10:30:00.000Z', 'time'],
    ['2026-12-01T10:30:00+02:00', '2026-12-01T08:30:00.000Z', 'time'],
    ['2026-12-01T10:30:00.250-05:00', '2026-12-01T15:30:00.250Z', 'time'],
    ['2026-12-01T10:30Z', '2026-12-01T10:30:00.000Z', 'time'],
    ['2026-12-01T10:30:00', '2026-12-01T10:30:00.000Z', 'time'], // no zone: read as UTC, not server time
    ['2026-12-01', '2026-12-01T00:00:00.000Z', 'day'],
    ['2026-12', '2026-12-01T00:00:00.000Z', 'month'],
    ['2026', '2026-01-01T00:00:00.000Z', 'year'],
  ])('reads %s', (text, startIso, precision) => {
    const parsed = parseFhirDateTime(text);
    expect(parsed?.precision).toBe(precision);
    expect(new Date(parsed?.startMs ?? Number.NaN).toISOString()).toBe(startIso);
  });

  it('gives the last moment of a partial date as its end', () => {
    expect(new Date(parseFhirDateTime('2024-02')?.endMs ?? 0).toISOString()).toBe('2024-02-29T23:59:59.999Z');
  });

  describe('the last day of each month', () => {
    // Gregorian calendar (ISO 8601): a leap year is divisible by 4, except centuries not divisible by 400.
    it.each([
      ['2024-02-29', '2024-02-30'], // 2024 is a leap year
      ['2000-02-29', '2000-02-30'], // divisible by 400: leap
      ['2026-02-28', '2026-02-29'], // not divisible by 4
      ['2100-02-28', '2100-02-29'], // a century not divisible by 400
      ['2026-04-30', '2026-04-31'], // April has 30 days
      ['2026-09-30', '2026-09-31'], // September has 30 days
      ['2026-12-31', '2026-12-32'], // December has 31 days
    ])('reads %s and rejects %s', (last, beyond) => {
      expect(parseFhirDateTime(last)?.precision).toBe('day');
      expect(parseFhirDateTime(`${last}T23:59:59Z`)?.precision).toBe('time');
      expect(parseFhirDateTime(beyond)).toBeUndefined();
      expect(parseFhirDateTime(`${beyond}T00:00:00Z`)).toBeUndefined();
    });
  });

  describe('edge cases', () => {
    it.each([['2026-02-30'], ['2026-13'], ['2026-12-01T25:00:00Z'], ['01/12/2026'], ['today'], [''], [20261201], [null], [{}]])(
      'rejects %j',
      (value) => {
        expect(parseFhirDateTime(value)).toBeUndefined();
      },
    );
  });
});

describe('describeAge', () => {
  it.each([
    [95 * 60_000, '95 min'],
    [9 * 3_600_000, '9 h'],
    [3 * 86_400_000, '3 d'],
  ])('gives %i ms as %s', (ms, text) => {
    expect(describeAge(ms)).toBe(text);
  });
});

describe('parseFhirDateTime reads a time however it is spaced', () => {
  // FHIR R4 dateTime (hl7.org/fhir/R4/datatypes.html; from memory): YYYY-MM-DDThh:mm:ss with a zone.
  // The plain UTC form is read without the regular expression, so it is compared with the same text
  // with a space before it, which the expression reads; out-of-range fields are generated on purpose.
  const twoDigits = fc.integer({ min: 0, max: 99 }).map((n) => String(n).padStart(2, '0'));
  const utcTime = fc
    .tuple(fc.integer({ min: 0, max: 9999 }), twoDigits, twoDigits, twoDigits, twoDigits, twoDigits)
    .map(([y, mo, d, h, mi, s]) => `${String(y).padStart(4, '0')}-${mo}-${d}T${h}:${mi}:${s}Z`);

  it('gives the same instant, or none, as the expression does', () => {
    fc.assert(
      fc.property(utcTime, (text) => {
        expect(parseFhirDateTime(text)).toStrictEqual(parseFhirDateTime(` ${text}`));
      }),
      { numRuns: 2000 },
    );
  });

  // The form JavaScript's toISOString writes, with three fraction digits, is read the same way.
  const withMilliseconds = fc
    .tuple(utcTime, fc.integer({ min: 0, max: 999 }))
    .map(([text, ms]) => `${text.slice(0, -1)}.${String(ms).padStart(3, '0')}Z`);

  it('gives the same instant, or none, as the expression does with milliseconds', () => {
    fc.assert(
      fc.property(withMilliseconds, (text) => {
        expect(parseFhirDateTime(text)).toStrictEqual(parseFhirDateTime(` ${text}`));
      }),
      { numRuns: 2000 },
    );
  });

  it.each([
    ['2026-11-30T09:25:00Z', '2026-11-30T09:25:00.000Z'],
    ['2026-11-30T09:25:00.007Z', '2026-11-30T09:25:00.007Z'], // ECMA-262 Date Time String Format
    ['2026-11-30T09:25:00.999Z', '2026-11-30T09:25:00.999Z'], // ECMA-262 Date Time String Format
    ['2024-02-29T23:59:60Z', '2024-03-01T00:00:00.000Z'], // a leap second reads as the next minute
  ])('reads %s as %s', (text, iso) => {
    expect(new Date(parseFhirDateTime(text)?.startMs ?? Number.NaN).toISOString()).toBe(iso);
  });

  it.each([
    ['2026-02-29T09:25:00Z'],
    ['2026-13-01T09:25:00Z'],
    ['2026-11-30T24:00:00Z'],
    ['2026-11-30T09:60:00Z'],
    ['2026-11-30T09:25:61Z'],
    ['2026-02-29T09:25:00.000Z'],
    ['2026-11-30T09:25:00,000Z'], // the fraction follows "." (FHIR R4 dateTime; from memory)
    ['2026-11-30T09:25:00.0a0Z'],
  ])(
    'rejects %s',
    (text) => {
      expect(parseFhirDateTime(text)).toBeUndefined();
    },
  );
});
