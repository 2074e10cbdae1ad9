import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  clauseBefore,
  CLAUSE_LOOK_BACK_CHARS,
  findBoundMentions,
  findSingleValueMentions,
  findTargetMentions,
  readTargetText,
  readWrittenTarget,
} from '../../src/fhir/read-target-text.js';

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
      conditional: false,
      fraction: false,
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
      ['fractions with no saturation word', 'give 0.88-0.92'],
      ['an FiO2 range in fractions', 'FiO2 0.60-0.80'],
      ['fractions below one half after a saturation word', 'SpO2 target 0.24-0.28'],
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

// The published ranges the notations below are written for: 88-92 % (BTS 2017, Table 4), 94-98 %
// (BTS 2017, Tables 1-3) and 92-96 % (TSANZ 2015).
const PUBLISHED_RANGES = [
  { lowPercent: 88, highPercent: 92 }, // BTS 2017, Table 4
  { lowPercent: 94, highPercent: 98 }, // BTS 2017, Tables 1-3
  { lowPercent: 92, highPercent: 96 }, // TSANZ 2015
] as const;

// Ways prescribers write a range (common practice): the words before, between and after the numbers.
const LEADS = ['target SpO2 ', 'Target sats ', 'aim ', 'keep saturations ', 'SpO2 target: ', 'titrate to SpO2 ', 'goal ', ''];
const DASHES = ['-', '\u2010', '\u2011', '\u2012', '\u2013', '\u2014', '\u2212', ' - ', ' \u2013 ', ' to '];
const UNITS = ['%', ' %', ' percent', ' per cent', '\uFF05'];

describe('readWrittenTarget: every notation of a range reads as that range', () => {
  it('reads a generated notation of a published range as the range, with no note', () => {
    fc.assert(
      fc.property(
        fc.constantFrom(...PUBLISHED_RANGES),
        fc.constantFrom(...LEADS),
        fc.constantFrom(...DASHES),
        fc.constantFrom(...UNITS),
        fc.boolean(),
        fc.boolean(),
        (range, lead, dash, unit, unitOnBoth, between) => {
          const low = `${range.lowPercent}${unitOnBoth ? unit : ''}`;
          const body = between ? `between ${low} and ${range.highPercent}` : `${low}${dash}${range.highPercent}`;
          const text = `${lead}${body}${unit}`;
          expect(readWrittenTarget([text])).toStrictEqual({ range, note: undefined });
        },
      ),
    );
  });

  it('reads the same range from an order sentence around it, whatever else the sentence says', () => {
    fc.assert(
      fc.property(
        fc.constantFrom(...PUBLISHED_RANGES),
        fc.constantFrom(...DASHES),
        fc.constantFrom('Oxygen 2 L/min via nasal cannula, ', '28% Venturi mask at 4 L/min; ', 'HFNC 40 L/min FiO2 0.4, ', ''),
        fc.constantFrom('', '. Review at 1 h', '; repeat ABG in 1 h'),
        (range, dash, before, after) => {
          const text = `${before}target SpO2 ${range.lowPercent}${dash}${range.highPercent}%${after}`;
          expect(readWrittenTarget([text]).range).toStrictEqual(range);
        },
      ),
    );
  });

  it.each([
    ['keep sats above 88 and below 92', 88, 92], // BTS 2017, Table 4, written as two bounds
    ['SpO2 no lower than 94% and no higher than 98%', 94, 98], // BTS 2017, Tables 1-3
    ['aim SpO2 at least 92 %, at most 96 %', 92, 96], // TSANZ 2015
  ])('reads a lower and an upper bound together, "%s", as the range %i–%i %%', (text, low, high) => {
    expect(readWrittenTarget([text])).toStrictEqual({ range: { lowPercent: low, highPercent: high }, note: undefined });
  });
});

describe('readWrittenTarget: one bound', () => {
  it.each([
    ['SpO2 > 94%', 'above', 94],
    ['SpO2 >94 %', 'above', 94],
    ['keep sats above 92', 'above', 92],
    ['maintain saturations over 92%', 'above', 92],
    ['target SpO2 greater than 94%', 'above', 94],
    ['≥ 92 %', 'at-least', 92],
    ['SpO2 >= 92%', 'at-least', 92],
    ['at least 92%', 'at-least', 92],
    ['aim for sats of at least 94 percent', 'at-least', 94],
    ['sats not below 88', 'at-least', 88],
    ['keep SpO2 not less than 88 %', 'at-least', 88],
    ['target minimum 92%', 'at-least', 92],
    ['SpO2 ≤ 92%', 'at-most', 92],
    ['keep sats no higher than 92', 'at-most', 92],
    ['sats not above 92%', 'at-most', 92],
    ['SpO2 < 93%', 'below', 93],
    ['keep saturations below 93 %', 'below', 93],
  ] as const)('reads "%s" as one bound (%s %i %%), with no range', (text, bound, percent) => {
    // Bounds near the published ranges: BTS 2017 Tables 1-4 (88-92 %, 94-98 %); TSANZ 2015 (92-96 %).
    expect(readWrittenTarget([text])).toStrictEqual({
      range: undefined,
      note: { kind: 'one-sided', bound, percent, text },
    });
  });

  it('reads the same bound twice as one bound', () => {
    const read = readWrittenTarget(['keep sats above 92', 'SpO2 > 92%']); // BTS 2017 asks for a range
    expect(read.note).toMatchObject({ kind: 'one-sided', percent: 92 });
  });

  it('takes a bound that the stated range keeps as part of that one target', () => {
    // BTS 2017, Tables 1-3: 94-98 %; "> 94" agrees with it (common practice reading of ">")
    expect(readWrittenTarget(['SpO2 > 94%, target 94-98%'])).toStrictEqual({
      range: { lowPercent: 94, highPercent: 98 },
      note: undefined,
    });
  });
});

describe('readWrittenTarget: two ranges or a condition', () => {
  it.each([
    ['88–92 % if drowsy, otherwise 94–98 %', [[88, 92], [94, 98]]],
    ['94-98%; 88-92% if CO2 retainer', [[94, 98], [88, 92]]],
    ['target 88-92% or 94-98%', [[88, 92], [94, 98]]],
    ['94–98 % until the gas is back', [[94, 98]]],
    ['SpO2 94-98% pending ABG', [[94, 98]]],
    ['initially aim 94-98%', [[94, 98]]],
    ['target 88-92% unless PaCO2 normal', [[88, 92]]],
    ['aim 94-98% for now', [[94, 98]]],
    ['if drowsy, target 88-92%', [[88, 92]]],
    ['target 88-92%, keep sats above 94', [[88, 92]]],
  ])('reads "%s" as ambiguous and names its ranges', (text, ranges) => {
    // BTS 2017 Tables 1-4 give one range a patient; these texts give two, or one on a condition.
    const read = readWrittenTarget([text]);
    expect(read.note).toMatchObject({
      kind: 'ambiguous',
      ranges: ranges.map(([low, high]) => ({ lowPercent: low, highPercent: high })),
    });
    expect(read.note?.text.length).toBeGreaterThan(0);
  });

  it('returns the range that allows the most oxygen, so the hypercapnic-risk check sees it', () => {
    // BTS 2017 Table 4: the risk is a target above 88-92 %; 94-98 % is the higher of the two.
    expect(readWrittenTarget(['88–92 % if drowsy, otherwise 94–98 %']).range).toStrictEqual({ lowPercent: 94, highPercent: 98 });
    expect(readWrittenTarget(['94-98% until the gas is back']).range).toStrictEqual({ lowPercent: 94, highPercent: 98 });
  });

  it('reads different ranges in two of the order’s texts as ambiguous', () => {
    const read = readWrittenTarget(['2L NC, target 94-98%', 'Note: aim 88-92%']); // BTS 2017 Tables 1-4
    expect(read.note?.kind).toBe('ambiguous');
  });

  it.each([
    'Target 94-98% if needed', // "if needed" is routine wording, not a condition (common practice)
    'target SpO2 94-98%, if below 94 increase to 4L', // a titration plan, not a second target
    'target 94-98%. If SpO2 < 90% call doctor', // a trigger for review
    'aim 94-98% if tolerated',
  ])('does not take a plan or a routine phrase for a condition: "%s"', (text) => {
    // BTS 2017, Tables 1-3: 94-98 %
    expect(readWrittenTarget([text])).toStrictEqual({ range: { lowPercent: 94, highPercent: 98 }, note: undefined });
  });
});

describe('readWrittenTarget: no SpO2 target', () => {
  it.each([
    'for comfort, no SpO2 target',
    'palliative: titrate to comfort, do not monitor sats',
    'Comfort care. No target range.',
    'O2 2L NC for breathlessness; no sats target',
    'Target: none (end of life care)',
    'titrate to comfort',
    'do not check SpO2',
    'sats monitoring not required, palliative',
  ])('reads "%s" as an order with no SpO2 target', (text) => {
    // BTS 2017: in terminal palliative care oxygen is for comfort, not an SpO2 target
    expect(readWrittenTarget([text])).toMatchObject({ range: undefined, note: { kind: 'no-target' } });
  });

  it('reads "no target" beside a stated range as ambiguous', () => {
    expect(readWrittenTarget(['no SpO2 target', 'aim 94-98%']).note?.kind).toBe('ambiguous'); // BTS 2017 Tables 1-3
  });
});

describe('readWrittenTarget: what is not a target', () => {
  it.each([
    '28% Venturi',
    'FiO2 40%',
    'FiO2 > 40%',
    'Venturi up to 40%',
    'HFNC 60 L/min FiO2 at least 60%',
    '2-4 L/min via NC',
    'up to 15 L/min via reservoir mask',
    'if SpO2 below 85 % call doctor, increase to 4 L/min',
    'call if sats < 88%',
    'wean if SpO2 > 94%',
    'inform doctor when SpO2 falls under 90',
    'PaO2 above 60 mmHg',
    'keep PaO2 > 60',
    'HR > 100',
    'bed 12, age over 65',
  ])('reads nothing from "%s"', (text) => {
    // FiO2 settings (BTS 2017 Table 4 Venturi settings), flows and triggers are not SpO2 targets.
    expect(readWrittenTarget([text])).toStrictEqual({ range: undefined, note: undefined });
  });

  it('keeps a contingency bound apart as a trigger, for the rewrite to leave alone', () => {
    const found = findBoundMentions('target 94-98%. If SpO2 below 85 % call doctor');
    expect(found.targets).toStrictEqual([]);
    expect(found.triggers.map((t) => t.percent)).toStrictEqual([85]); // an invented contingency threshold
  });
});

describe('readWrittenTarget: a range written as fractions', () => {
  // SpO2 is a fraction of one as well as a percentage (ISO 80601-2-61 defines it as a ratio; common
  // practice writes it as a percentage). The ranges are the published ones.
  it.each([
    ['SpO2 target 0.94-0.98', 94, 98], // BTS 2017, Tables 1-3
    ['target sats 0.88–0.92', 88, 92], // BTS 2017, Table 4 (en dash)
    ['aim SpO2 .92 to .96', 92, 96], // TSANZ 2015, Respirology 20:1182
    ['Oxygen 2 L/min NC, SpO2 target 0.94-0.98', 94, 98], // BTS 2017, Tables 1-3
    ['maintain saturations 0.94 - 1.0', 94, 100], // from memory: "up to 1.0" is sometimes written; read as written
  ])('reads "%s" as %i–%i %%', (text, low, high) => {
    expect(readWrittenTarget([text])).toStrictEqual({ range: { lowPercent: low, highPercent: high }, note: undefined });
    expect(findTargetMentions(text)[0]?.fraction).toBe(true);
  });

  it('reads any two-place fraction range after a saturation word as the same percentage range', () => {
    fc.assert(
      fc.property(fc.integer({ min: 50, max: 99 }), fc.integer({ min: 1, max: 50 }), (low, width) => {
        const high = Math.min(100, low + width);
        const asFraction = (p: number): string => (p / 100).toFixed(2);
        const read = readWrittenTarget([`SpO2 target ${asFraction(low)}-${asFraction(high)}`]);
        // Percentages and fractions are the same quantity (ISO 80601-2-61; common practice)
        expect(read.range).toStrictEqual({ lowPercent: low, highPercent: high });
      }),
    );
  });
});

describe('readWrittenTarget: one value', () => {
  // BTS 2017 asks that oxygen be prescribed to a target range; one value is neither a range nor a floor.
  it.each([
    ['target SpO2 94%', 94], // BTS 2017, Tables 1-3: 94 is the low end of 94-98 %
    ['Oxygen 2 L/min nasal cannulae, target SpO2 94%', 94], // BTS 2017, Tables 1-3
    ['Target: 92%', 92], // TSANZ 2015, Respirology 20:1182: low end of 92-96 %
    ['aim sats 88', 88], // BTS 2017, Table 4: low end of 88-92 %
    ['keep SpO2 of 90 %', 90], // from memory: a value some prescribers write; read as written
    ['titrate to sats 96%', 96], // TSANZ 2015: inside 92-96 %
    ['target saturations of approximately 94 per cent', 94], // BTS 2017, Tables 1-3
  ])('reads "%s" as one value (%i %%), with no range', (text, percent) => {
    expect(readWrittenTarget([text])).toStrictEqual({ range: undefined, note: { kind: 'single-value', percent, text } });
  });

  it.each([
    ['an observation, not a target', 'sats 91% on air, 2L NC'],
    ['a trigger', 'if SpO2 below 85% call doctor'],
    ['a number after a target word but an observation word between', 'target range: currently 91%'],
    ['a flow after a target word', 'titrate to 4 L/min'],
    ['a postfix bound', 'keep sats 94% or above'],
    ['a plus sign', 'target SpO2 94+'],
    ['a PaO2', 'target PaO2 60 mmHg'],
    ['a value outside the plausible targets', 'target SpO2 40%'],
  ])('does not read %s ("%s") as a single-value target', (_what, text) => {
    expect(readWrittenTarget([text]).note?.kind).not.toBe('single-value');
  });

  it('leaves a value beside a written range to the range', () => {
    // BTS 2017, Tables 1-3: 94-98 %; the 91 is what the patient reads now, not a second target
    expect(readWrittenTarget(['target SpO2 94-98%, sats 91% on air'])).toStrictEqual({
      range: { lowPercent: 94, highPercent: 98 },
      note: undefined,
    });
  });

  it('reads two different values, or one with a condition, as ambiguous', () => {
    // BTS 2017, Table 4 (88) and Tables 1-3 (94): two values leave the target unclear
    expect(readWrittenTarget(['target SpO2 88%', 'target SpO2 94%']).note?.kind).toBe('ambiguous');
    expect(readWrittenTarget(['target SpO2 94% until the gas is back']).note?.kind).toBe('ambiguous');
  });

  it('finds the value under any target word and saturation word, and nothing when the target word is missing', () => {
    const targetWords = ['target', 'aim', 'goal', 'keep', 'maintain', 'titrate to'];
    const satWords = ['SpO2', 'sats', 'saturations', ''];
    fc.assert(
      fc.property(
        fc.constantFrom(...targetWords),
        fc.constantFrom(...satWords),
        fc.integer({ min: 80, max: 100 }), // common practice: the targets written on wards lie in 80-100 %
        fc.constantFrom('%', ' %', '', ' percent'),
        (word, sat, percent, unit) => {
          const text = `O2 2L NC, ${word} ${sat} ${percent}${unit}`.replace(/\s+/g, ' ');
          const found = findSingleValueMentions(text, []);
          expect(found.map((f) => f.percent)).toStrictEqual([percent]);
          expect(findSingleValueMentions(`O2 2L NC, ${sat} ${percent}${unit} on air`, [])).toStrictEqual([]);
        },
      ),
    );
  });
});
