import { describe, expect, it } from 'vitest';
import { clauseBefore, CLAUSE_LOOK_BACK_CHARS, findTargetMentions, readTargetText } from '../../src/fhir/read-target-text.js';

describe('readTargetText', () => {
  // The ranges are the published targets: 88-92 % for patients at risk of hypercapnic respiratory
  // failure (BTS 2017, Table 4) and 94-98 % for other acutely ill adults (BTS 2017, Tables 1-3).
  it.each([
    ['target SpO2 88-92%', 88, 92], // BTS 2017, Table 4
    ['88–92%', 88, 92], // BTS 2017, Table 4 (en dash)
    ['SpO2 94 to 98 %', 94, 98], // BTS 2017, Tables 1-3
    ['aim sats 88-92', 88, 92], // BTS 2017, Table 4
    ['Keep saturations 94—98% please', 94, 98], // BTS 2017, Tables 1-3 (em dash)
    ['Oxygen to maintain SpO2 92-96%', 92, 96], // TSANZ 2015, Respirology 20:1182
    ['target 88%-92%', 88, 92], // BTS 2017, Table 4
    ['Venturi 28%, target 88-92%', 88, 92], // BTS 2017, Table 4
  ])('reads "%s" as %i–%i %%', (text, low, high) => {
    expect(readTargetText(text)).toStrictEqual({ lowPercent: low, highPercent: high });
  });

  it('gives the offsets of each number so a rewrite keeps the wording', () => {
    const [mention] = findTargetMentions('target SpO2 94-98%');
    expect(mention).toStrictEqual({
      range: { lowPercent: 94, highPercent: 98 },
      start: 12,
      end: 18,
      lowStart: 12,
      lowEnd: 14,
      highStart: 15,
      highEnd: 17,
    });
  });

  describe('edge cases', () => {
    it.each([
      ['a flow range', '1-2 L/min via nasal cannula'],
      ['a Venturi range', 'Venturi 24-28%'],
      ['an FiO2 range', 'FiO2 60-80%'],
      ['an FiO2 range after a titration word', 'titrate FiO2 60-80%'],
      ['a PaO2 target in mmHg', 'PaO2 target 60-80 mmHg'],
      ['a bare number range with no % and no saturation word', 'bed 88-92'],
      ['a range with low above high', 'target 98-94%'],
      ['a range above 100 %', 'target 95-105%'],
      ['decimals', 'target 0.88-0.92'],
      ['an empty string', ''],
    ])('does not read %s', (_what, text) => {
      expect(readTargetText(text)).toBeUndefined();
    });

    it('finds every range stated, not only the first', () => {
      const ranges = findTargetMentions('SpO2 94-98%; if COPD confirmed aim 88-92%').map((m) => m.range);
      expect(ranges).toStrictEqual([
        { lowPercent: 94, highPercent: 98 },
        { lowPercent: 88, highPercent: 92 },
      ]);
    });
  });
});

describe('clauseBefore', () => {
  it('returns the words since the last clause break', () => {
    const text = 'Home NIV at night; oxygen 2 L/min via nasal cannula';
    expect(clauseBefore(text, text.indexOf('nasal'))).toBe(' oxygen 2 L/min via ');
  });

  describe('edge cases', () => {
    it('looks back a bounded distance, so a long text costs the same per mention', () => {
      const text = `${'word '.repeat(1000)}target 88-92%`;
      expect(clauseBefore(text, text.indexOf('target')).length).toBe(CLAUSE_LOOK_BACK_CHARS);
    });

    it('still reads every target in a long text of many clauses', () => {
      // Invented text; each clause states the same range (BTS 2017 Table 4: 88-92 %).
      const text = Array.from({ length: 2000 }, () => 'aim sats 88-92%').join('; ');
      expect(findTargetMentions(text).length).toBe(2000);
    });
  });
});
