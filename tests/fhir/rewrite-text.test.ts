import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { deviceWords, rewriteDevice, rewriteFlow, rewriteTarget } from '../../src/fhir/rewrite-text.js';
import { findFlowMentions } from '../../src/fhir/read-setting-text.js';
import { findTargetMentions } from '../../src/fhir/read-target-text.js';

// BTS 2017 Table 4: 88-92 % for patients at risk of hypercapnic respiratory failure
const HYPERCAPNIC = { lowPercent: 88, highPercent: 92 };

describe('rewriteTarget: one value and fractions', () => {
  // BTS 2017, Table 4: 88-92 %; Tables 1-3: 94-98 %
  it.each([
    ['Oxygen 2 L/min nasal cannulae, target SpO2 94%', { lowPercent: 94, highPercent: 98 }, 'Oxygen 2 L/min nasal cannulae, target SpO2 94-98%'],
    ['aim sats 88', { lowPercent: 88, highPercent: 92 }, 'aim sats 88-92%'],
    ['SpO2 target 0.94-0.98', { lowPercent: 88, highPercent: 92 }, 'SpO2 target 0.88-0.92'],
    ['target sats .94 to .98, 2L NC', { lowPercent: 88, highPercent: 92 }, 'target sats 0.88 to 0.92, 2L NC'],
  ])('rewrites "%s" in place, with no second target', (before, range, after) => {
    const result = rewriteTarget(before, range);
    expect(result).toStrictEqual({ text: after, stated: true, leftAsWritten: [] });
  });

  it('leaves an observation beside a written range alone', () => {
    // BTS 2017, Tables 1-3: 94-98 %; "sats 91% on air" is a reading, not a target
    expect(rewriteTarget('target SpO2 94-98%, sats 91% on air', { lowPercent: 88, highPercent: 92 }).text).toBe(
      'target SpO2 88-92%, sats 91% on air',
    );
  });
});

describe('rewriteTarget', () => {
  it.each([
    ['target SpO2 94-98%', 'target SpO2 88-92%'],
    ['Target SpO2 94–98%', 'Target SpO2 88–92%'],
    ['SpO2 94 to 98 %', 'SpO2 88 to 92 %'],
    ['aim sats 94-98, review at 1 h', 'aim sats 88-92, review at 1 h'],
    ['SpO2 94-98%; if COPD aim 94-98%', 'SpO2 88-92%; if COPD aim 88-92%'],
  ])('rewrites "%s"', (before, after) => {
    expect(rewriteTarget(before, HYPERCAPNIC)).toStrictEqual({ text: after, stated: true, leftAsWritten: [] });
  });

  it('says when the text states no target', () => {
    expect(rewriteTarget('2L NC', HYPERCAPNIC)).toStrictEqual({ text: '2L NC', stated: false, leftAsWritten: [] });
  });
});

describe('rewriteFlow', () => {
  it.each([
    ['2L NC', 1, '1L NC', []],
    ['15 L/min non-rebreather', 10, '10 L/min non-rebreather', []],
    ['NC 1-2 L/min', 2, 'NC 2 L/min', []],
    ['2L NC, escalate to 15L NRB', 1, '1L NC, escalate to 15L NRB', ['15L']], // a plan is left alone, and listed
    ['Venturi 28% at 4 L/min', 6, 'Venturi 28% at 6 L/min', []], // 28 % at 1.5 x 4 L/min, BTS 2017 Table 4
    // the contingency flow keeps its words: only the flow the order reads changes
    ['3L NC; if SpO2 below 85 % call doctor, increase to 4 L/min', 2, '2L NC; if SpO2 below 85 % call doctor, increase to 4 L/min', ['4 L/min']],
    // a step size is not the order's flow: it keeps its words and is listed (step sizes: common practice)
    ['3 L/min NC, wean by 0.5 L/min steps', 2, '2 L/min NC, wean by 0.5 L/min steps', ['0.5 L/min']],
    ['Reduce by 1L when SpO2 above 96%; 2L NC', 1, 'Reduce by 1L when SpO2 above 96%; 1L NC', ['1L']],
  ])('rewrites "%s" to %s L/min', (before, flow, after, left) => {
    expect(rewriteFlow(before, flow)).toStrictEqual({ text: after, stated: true, leftAsWritten: left });
  });
});

describe('rewriteDevice', () => {
  it.each([
    ['2L NC', { device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 }, '4L 28% Venturi mask'],
    ['28% venturi at 4 L/min', { device: 'venturi-mask', flowLPerMin: 2, setFio2Fraction: 0.24 }, '24% Venturi mask at 2 L/min'],
    ['28% venturi at 4 L/min', { device: 'nasal-cannula', flowLPerMin: 2 }, 'nasal cannula at 2 L/min'],
    ['HFNC 50 L/min FiO2 0.45', { device: 'reservoir-mask', flowLPerMin: 15 }, 'reservoir mask (non-rebreather) 15 L/min'],
    ['HFNC 50 L/min FiO2 0.45', { device: 'high-flow-nasal-cannula', flowLPerMin: 40, setFio2Fraction: 0.6 }, 'high-flow nasal cannula 40 L/min FiO2 0.6'],
    ['high flow 40L 60%', { device: 'high-flow-nasal-cannula', flowLPerMin: 50, setFio2Fraction: 0.5 }, 'high-flow nasal cannula 50L 50%'],
    ['24% mask 2 L/min', { device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 }, '28% Venturi mask 4 L/min'],
  ] as const)('rewrites "%s"', (before, change, after) => {
    expect(rewriteDevice(before, change)).toStrictEqual({ text: after, stated: true, leftAsWritten: [] });
  });

  describe('edge cases', () => {
    it('leaves a text that names no device, flow or FiO2 as it was', () => {
      expect(rewriteDevice('Oxygen therapy', { device: 'nasal-cannula', flowLPerMin: 2 })).toStrictEqual({ text: 'Oxygen therapy', stated: false, leftAsWritten: [] });
    });

    it('leaves devices named as history alone', () => {
      expect(rewriteDevice('home NIV; 2L NC', { device: 'simple-face-mask', flowLPerMin: 5 }).text).toBe('home NIV; 5L simple face mask');
    });

    it('names the Venturi setting with the device', () => {
      expect([deviceWords('venturi-mask', 0.28), deviceWords('venturi-mask', undefined), deviceWords('cpap-niv', 0.4)]).toStrictEqual([
        '28% Venturi mask',
        'Venturi mask',
        'CPAP/NIV',
      ]);
    });
  });
});

/** Every number in a text, in order. */
const numbersIn = (text: string): string[] => text.match(/\d+(?:\.\d+)?/g) ?? [];

/** The text with the spans [start, end) cut out. */
function without(text: string, spans: readonly { start: number; end: number }[]): string {
  let out = '';
  let at = 0;
  for (const span of [...spans].sort((a, b) => a.start - b.start)) {
    out += `${text.slice(at, span.start)}\u0000`;
    at = span.end;
  }
  return out + text.slice(at);
}

// Invented order wording at Larkspur Bay: the ordered clause, then clauses that hold other numbers
// (contingency plans, escalation, review times, other SpO2 thresholds), in any order and number.
const otherClauses = fc.constantFrom(
  'if SpO2 below 85 % call doctor, increase to 4 L/min',
  'escalate to 15L NRB if SpO2 < 85%',
  'review in 1 h',
  'repeat ABG at 30-60 min',
  'call outreach if RR > 25',
  'max 6 L/min on the ward',
  'bed 12',
  'NEWS2 review if score 5 or more',
);
const flows = fc.constantFrom(1, 2, 3, 4, 5, 6); // nasal cannula 1-6 L/min (common practice)
const joiners = fc.constantFrom('; ', '. ', ', ', '\n');

describe('properties of a text rewrite', () => {
  it('a flow rewrite changes only the read number: every other number and clause is unchanged', () => {
    fc.assert(
      fc.property(flows, flows, fc.array(otherClauses, { maxLength: 4 }), joiners, (oldFlow, newFlow, others, joiner) => {
        const text = [`O2 ${oldFlow}L via nasal cannula`, ...others].join(joiner);
        const read = findFlowMentions(text)[0];
        if (read === undefined) throw new Error('generated text states no flow');
        const result = rewriteFlow(text, newFlow);
        // exactly the read span is replaced
        expect(result.text).toBe(`${text.slice(0, read.valueStart)}${newFlow}${text.slice(read.valueEnd)}`);
        // every clause after the ordered one is unchanged, character for character
        expect(result.text.endsWith(others.length === 0 ? '' : [ '', ...others].join(joiner))).toBe(true);
        expect(numbersIn(without(result.text, [{ start: read.valueStart, end: read.valueStart + String(newFlow).length }]))).toStrictEqual(
          numbersIn(without(text, [{ start: read.valueStart, end: read.valueEnd }])),
        );
      }),
    );
  });

  it('a target rewrite changes only the target numbers: every other number and clause is unchanged', () => {
    // BTS 2017: 88-92 % (Table 4) and 94-98 % (Tables 1-3); TSANZ 2015: 92-96 %
    const ranges = fc.constantFrom(
      { lowPercent: 88, highPercent: 92 },
      { lowPercent: 94, highPercent: 98 },
      { lowPercent: 92, highPercent: 96 },
    );
    const dashes = fc.constantFrom('-', '–', '—', ' to ', '\u2212');
    fc.assert(
      fc.property(ranges, ranges, dashes, fc.array(otherClauses, { maxLength: 4 }), joiners, (oldRange, newRange, dash, others, joiner) => {
        const text = [`2L NC, target SpO2 ${oldRange.lowPercent}${dash}${oldRange.highPercent}%`, ...others].join(joiner);
        const mentions = findTargetMentions(text);
        expect(mentions.length).toBe(1);
        const result = rewriteTarget(text, newRange);
        const [m] = mentions;
        if (m === undefined) return;
        const expected =
          text.slice(0, m.lowStart) + String(newRange.lowPercent) + text.slice(m.lowEnd, m.highStart) + String(newRange.highPercent) + text.slice(m.highEnd);
        expect(result.text).toBe(expected);
        const cut = (t: string, low: string, high: string) =>
          numbersIn(without(t, [{ start: m.lowStart, end: m.lowStart + low.length }, { start: m.highStart + (low.length - (m.lowEnd - m.lowStart)), end: m.highStart + (low.length - (m.lowEnd - m.lowStart)) + high.length }]));
        expect(cut(result.text, String(newRange.lowPercent), String(newRange.highPercent))).toStrictEqual(
          cut(text, String(oldRange.lowPercent), String(oldRange.highPercent)),
        );
      }),
    );
  });

  it('a device rewrite leaves every clause that is not the order as written', () => {
    fc.assert(
      fc.property(flows, fc.array(otherClauses, { minLength: 1, maxLength: 4 }), (flow, others) => {
        const text = [`${flow}L NC`, ...others].join('; ');
        const result = rewriteDevice(text, { device: 'venturi-mask', flowLPerMin: 4, setFio2Fraction: 0.28 }); // BTS 2017 Table 4
        expect(result.text.split('; ').slice(1)).toStrictEqual(others);
      }),
    );
  });
});
