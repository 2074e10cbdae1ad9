import { describe, expect, it } from 'vitest';
import { filterQueryString, parseListQuery, parseSummaryQuery } from '../../src/review/review-query.js';

const context = { now: new Date('2026-07-12T12:00:00Z'), timeZone: 'Europe/London' };

function issuesOf(raw: Record<string, unknown>): string[] {
  const parsed = parseListQuery(raw, context);
  return parsed.kind === 'invalid' ? parsed.issues.map((i) => i.path) : [];
}

describe('parseListQuery', () => {
  it('reads every filter into the store query, with paging as limit and offset', () => {
    const parsed = parseListQuery(
      { unit: 'Ward 7', rule: 'spo2-above-target', indicator: 'warning', outcome: 'none', page: '3', pageSize: '10' },
      context,
    );
    expect(parsed).toStrictEqual({
      kind: 'ok',
      filters: { unit: 'Ward 7', rule: 'spo2-above-target', indicator: 'warning', outcome: 'none', page: 3, pageSize: 10 },
      query: { unit: 'Ward 7', ruleId: 'spo2-above-target', indicator: 'warning', outcome: 'none', limit: 10, offset: 20 },
    });
  });

  it("reads a patient key into the store query, so one patient's advisories can be listed", () => {
    const key = '6075a676394c51993ee5eea68ddc9a61';
    const parsed = parseListQuery({ patient: key }, context);
    expect(parsed).toStrictEqual({
      kind: 'ok',
      filters: { patient: key, page: 1, pageSize: 25 },
      query: { patientKey: key, limit: 25, offset: 0 },
    });
    expect(parsed.kind === 'ok' && filterQueryString(parsed.filters, 2)).toBe(`?patient=${key}&page=2`);
    // A key is hexadecimal: a name or a record number is refused, never searched for.
    expect(issuesOf({ patient: 'Jane Doe' })).toStrictEqual(['patient']);
    expect(issuesOf({ patient: 'MRN00123' })).toStrictEqual(['patient']);
  });

  it('treats empty form fields as any and ignores unknown parameters', () => {
    const parsed = parseListQuery({ unit: '', rule: ' ', utm_source: 'x', sort: 'desc' }, context);
    expect(parsed).toStrictEqual({ kind: 'ok', filters: { page: 1, pageSize: 25 }, query: { limit: 25, offset: 0 } });
  });

  it.each([
    [{ indicator: 'severe' }, 'indicator'],
    [{ outcome: 'declined' }, 'outcome'],
    [{ rule: 'Not A Rule' }, 'rule'],
    [{ unit: 'x'.repeat(101) }, 'unit'],
    [{ unit: 'Ward\u00007' }, 'unit'],
    [{ unit: ['Ward 7', 'Ward 9'] }, 'unit'],
    [{ from: '12/07/2026' }, 'from'],
    [{ from: '2026-02-30' }, 'from'],
    [{ to: '2026-07-12T06:00:00' }, 'to'],
    [{ window: '2w' }, 'window'],
    [{ window: '7d', from: '2026-07-01' }, 'window'],
    [{ from: '2026-07-12', to: '2026-07-11' }, 'to'],
    [{ page: '0' }, 'page'],
    [{ page: '-1' }, 'page'],
    [{ pageSize: '1000' }, 'pageSize'],
    [{ pageSize: '1e2' }, 'pageSize'],
  ])('names the field of a bad value: %j', (raw, field) => {
    expect(issuesOf(raw)).toStrictEqual([field]);
  });

  it('names every bad field at once', () => {
    expect(issuesOf({ indicator: 'x', outcome: 'y', page: 'z' })).toStrictEqual(['indicator', 'outcome', 'page']);
  });

  it('never echoes the value in an issue message', () => {
    const parsed = parseListQuery({ indicator: '<script>', from: '<b>' }, context);
    expect(parsed.kind).toBe('invalid');
    if (parsed.kind === 'invalid') {
      expect(parsed.issues.map((i) => i.message).join(' ')).not.toContain('<');
    }
  });

  it('reads from and to as whole local days in the site zone, to inclusive', () => {
    const parsed = parseListQuery({ from: '2026-07-01', to: '2026-07-12' }, context);
    // Midnight BST is 23:00 UTC the day before (Summer Time Act 1972); `to` runs to the end of its day.
    expect(parsed.kind === 'ok' && parsed.query).toMatchObject({ from: '2026-06-30T23:00:00.000Z', to: '2026-07-12T23:00:00.000Z' });
  });

  it('reads from and to as instants when given with a zone', () => {
    const parsed = parseListQuery({ from: '2026-07-12T06:00:00+01:00', to: '2026-07-12T10:00:00Z' }, context);
    expect(parsed.kind === 'ok' && parsed.query).toMatchObject({ from: '2026-07-12T05:00:00.000Z', to: '2026-07-12T10:00:00.000Z' });
  });

  it('turns a window into a from time back from now', () => {
    const parsed = parseListQuery({ window: '24h' }, context);
    expect(parsed.kind === 'ok' && parsed.query).toMatchObject({ from: '2026-07-11T12:00:00.000Z' });
    expect(parsed.kind === 'ok' && 'to' in parsed.query).toBe(false);
  });
});

describe('parseSummaryQuery', () => {
  it('reads the time window only, ignoring list filters', () => {
    expect(parseSummaryQuery({ window: '7d', unit: 'Ward 7' }, context)).toStrictEqual({
      kind: 'ok',
      filters: { window: '7d' },
      query: { from: '2026-07-05T12:00:00.000Z' },
    });
  });

  it('names a bad date', () => {
    const parsed = parseSummaryQuery({ to: 'tomorrow' }, context);
    expect(parsed.kind === 'invalid' && parsed.issues.map((i) => i.path)).toStrictEqual(['to']);
  });
});

describe('filterQueryString', () => {
  it('keeps the filters, leaves out defaults and page 1, and encodes values', () => {
    expect(filterQueryString({ unit: 'Ward 7 & 8', page: 1, pageSize: 25 }, 1)).toBe('?unit=Ward+7+%26+8');
    expect(filterQueryString({ outcome: 'none', page: 1, pageSize: 50 }, 2)).toBe('?outcome=none&pageSize=50&page=2');
    expect(filterQueryString({ page: 1, pageSize: 25 })).toBe('');
  });
});
