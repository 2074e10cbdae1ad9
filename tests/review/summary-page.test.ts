import { describe, expect, it } from 'vitest';
import { formatRate, overrideRate, totalsByRule } from '../../src/review/rule-summary.js';
import { renderSummaryPage } from '../../src/review/summary-page.js';
import type { RuleUnitSummary } from '../../src/store/store.js';
import { escapedHostile, hostile } from './support/advisory-fixtures.js';
import { elementsWith, numberAttr } from './support/read-markup.js';

const ZONE = 'Europe/London';

// Invented counts for two wards of the demo hospital.
const ROWS: RuleUnitSummary[] = [
  { ruleId: 'spo2-above-target', unit: 'Ward 7', fired: 10, accepted: 4, overridden: 4, noFeedback: 2, overrideReasons: [{ code: 'patient-specific-target', count: 3 }, { code: 'comfort-care', count: 1 }] },
  { ruleId: 'spo2-above-target', unit: 'Ward 9', fired: 5, accepted: 1, overridden: 2, noFeedback: 2, overrideReasons: [{ code: 'comfort-care', count: 2 }] },
  { ruleId: 'no-recent-spo2', unit: '', fired: 3, accepted: 0, overridden: 0, noFeedback: 3, overrideReasons: [] },
];

describe('override rate', () => {
  it('is overridden over all cards with feedback, leaving out cards with none', () => {
    expect(overrideRate({ accepted: 4, overridden: 4 })).toBe(0.5);
    expect(overrideRate({ accepted: 3, overridden: 1 })).toBe(0.25);
  });

  it('is undefined, not 0 %, when no card got feedback', () => {
    expect(overrideRate({ accepted: 0, overridden: 0 })).toBeUndefined();
    expect(formatRate(undefined)).toBe('no feedback');
    expect(formatRate(2 / 3)).toBe('67 %');
  });
});

describe('totalsByRule', () => {
  it('adds a rule up over its units and merges its reasons, commonest first', () => {
    const [above, quiet] = totalsByRule(ROWS);
    expect(above).toStrictEqual({
      ruleId: 'spo2-above-target',
      fired: 15,
      accepted: 5,
      overridden: 6,
      noFeedback: 4,
      overrideReasons: [{ code: 'comfort-care', count: 3 }, { code: 'patient-specific-target', count: 3 }],
    });
    expect(quiet?.ruleId).toBe('no-recent-spo2');
  });

  it('keeps fired equal to accepted + overridden + no feedback for every rule', () => {
    for (const t of totalsByRule(ROWS)) {
      expect(t.accepted + t.overridden + t.noFeedback).toBe(t.fired);
    }
  });
});

describe('renderSummaryPage', () => {
  const display = (ruleId: string, code: string): string | undefined =>
    ruleId === 'spo2-above-target' && code === 'comfort-care' ? 'Comfort care only' : undefined;

  it('has a per-rule table with counts and the override rate', () => {
    const out = renderSummaryPage({ timeZone: ZONE, reasonDisplay: display, result: { kind: 'ok', filters: {}, rows: ROWS } });
    const rows = elementsWith(out, 'data-rule-id').filter((r) => r['data-unit'] === undefined);
    expect(rows.map((r) => r['data-rule-id'])).toStrictEqual(['spo2-above-target', 'no-recent-spo2']);
    expect(out).toMatch(/data-col="override-rate" data-rate="0.5455">55 %</); // 6 / (5 + 6)
    expect(out).toContain('Comfort care only (comfort-care): 3');
    expect(out).toContain('patient-specific-target: 3');
  });

  it('has a per-rule-and-unit table, naming a missing unit', () => {
    const out = renderSummaryPage({ timeZone: ZONE, reasonDisplay: display, result: { kind: 'ok', filters: {}, rows: ROWS } });
    const rows = elementsWith(out, 'data-unit');
    expect(rows.map((r) => `${r['data-rule-id']}|${r['data-unit']}`)).toStrictEqual(['no-recent-spo2|', 'spo2-above-target|Ward 7', 'spo2-above-target|Ward 9']);
    expect(out).toContain('<span class="muted">not recorded</span>');
  });

  it('draws a stacked bar per rule whose segments add up to the rule fired count, widths in proportion', () => {
    const out = renderSummaryPage({ timeZone: ZONE, reasonDisplay: display, result: { kind: 'ok', filters: {}, rows: ROWS } });
    const bars = elementsWith(out, 'data-rule-bar');
    expect(bars.map((b) => [b['data-rule-bar'], b['data-fired']])).toStrictEqual([['spo2-above-target', '15'], ['no-recent-spo2', '3']]);
    const segments = elementsWith(out, 'data-segment');
    expect(segments).toHaveLength(6);
    const above = segments.slice(0, 3);
    expect(above.map((s) => [s['data-segment'], s['data-count']])).toStrictEqual([['accepted', '5'], ['overridden', '6'], ['noFeedback', '4']]);
    // Width per advisory is the same for every segment of every bar.
    const perCount = segments.filter((s) => numberAttr(s, 'data-count') > 0).map((s) => numberAttr(s, 'width') / numberAttr(s, 'data-count'));
    for (const ratio of perCount) {
      expect(ratio).toBeCloseTo(perCount[0] ?? 0, 1);
    }
    // Segments sit end to end.
    expect(numberAttr(above[1] ?? {}, 'x')).toBeCloseTo(numberAttr(above[0] ?? {}, 'x') + numberAttr(above[0] ?? {}, 'width'), 1);
  });

  it('says when the window holds no advisories, and draws no chart', () => {
    const out = renderSummaryPage({ timeZone: ZONE, reasonDisplay: display, result: { kind: 'ok', filters: { window: '24h' }, rows: [] } });
    expect(out).toContain('No advisories were issued in this window.');
    expect(out).not.toContain('<svg');
    expect(out).toContain('<option value="24h" selected>last 24 hours</option>');
  });

  it('names the field of a filter problem', () => {
    const out = renderSummaryPage({ timeZone: ZONE, reasonDisplay: display, result: { kind: 'invalid', issues: [{ path: 'from', message: 'must be a date' }] } });
    expect(out).toContain('data-field="from"');
  });

  it('escapes rule ids, units and reason codes from the store', () => {
    const rows: RuleUnitSummary[] = [{ ruleId: hostile('rule'), unit: hostile('unit'), fired: 1, accepted: 0, overridden: 1, noFeedback: 0, overrideReasons: [{ code: hostile('code'), count: 1 }] }];
    const out = renderSummaryPage({ timeZone: ZONE, reasonDisplay: display, result: { kind: 'ok', filters: {}, rows } });
    expect(out).not.toContain('<i data-f');
    for (const field of ['rule', 'unit', 'code']) {
      expect(out).toContain(escapedHostile(field));
    }
  });
});
