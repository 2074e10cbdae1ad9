import { readdirSync, readFileSync } from 'node:fs';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { DEVICE_PATTERNS, GATED_DEVICE_PATTERNS, findDeviceMentions, type DeviceMention } from '../../src/fhir/read-device-text.js';

/**
 * Each device pattern is run only on texts holding one of its `needs` words. That is safe only if
 * every match of the pattern holds one of them; this checks it over the device words of the test
 * suite, the examples and docs/basis/devices.md, in several letter cases. Device words are the
 * trade's (docs/basis/devices.md lists them and their sources).
 */

/** Every quoted string in the device, order and rewrite tests and in the examples' orders. */
function corpus(): string[] {
  const files = [
    'read-device-text.test.ts',
    'read-order.test.ts',
    'rewrite-text.test.ts',
    'read-setting-text.test.ts',
    'apply-change.test.ts',
    'is-oxygen-order.test.ts',
  ].map((name) => readFileSync(new URL(name, import.meta.url), 'utf8'));
  const examples = new URL('../../examples/', import.meta.url);
  for (const file of readdirSync(examples).filter((f) => f.endsWith('.json'))) {
    files.push(readFileSync(new URL(file, examples), 'utf8'));
  }
  files.push(readFileSync(new URL('../../docs/basis/devices.md', import.meta.url), 'utf8'));
  const quoted = files.flatMap((text) => [...text.matchAll(/'([^'\n]{2,200})'|"([^"\n]{2,200})"|`([^`\n]{2,200})`/g)].map((m) => m[1] ?? m[2] ?? m[3] ?? ''));
  const lines = files.flatMap((text) => text.split('\n'));
  const texts = [...quoted, ...lines];
  const variants = texts.flatMap((t) => [t, t.toUpperCase(), t.toLowerCase(), t.replace(/\b\w/g, (c) => c.toUpperCase())]);
  return [...new Set(variants)];
}

describe('device pattern gates', () => {
  const texts = corpus();

  it('find a needed word in every match of every pattern', () => {
    const missed: string[] = [];
    let matches = 0;
    for (const { device, pattern, needs, gate } of GATED_DEVICE_PATTERNS) {
      for (const text of texts) {
        for (const m of text.matchAll(pattern)) {
          matches += 1;
          // The words, and the compiled test findDeviceMentions runs: both must hold.
          if (!needs.some((word) => m[0].toLowerCase().includes(word)) || !gate.test(m[0])) {
            missed.push(`${device}: '${m[0]}' in '${text}'`);
          }
        }
      }
    }
    expect(missed).toStrictEqual([]);
    // The corpus names every device kind many times over, so the check means something.
    expect(matches).toBeGreaterThan(500);
    expect(new Set(texts.flatMap((t) => findDeviceMentions(t).map((m) => m.device))).size).toBe(7);
  });

  it('compile each pattern\'s own words into its test, in the same order', () => {
    expect(GATED_DEVICE_PATTERNS.map((p) => p.pattern)).toStrictEqual(DEVICE_PATTERNS.map((p) => p.pattern));
    for (const { needs, gate } of GATED_DEVICE_PATTERNS) {
      for (const word of needs) {
        expect(gate.test(`x ${word.toUpperCase()} x`)).toBe(true);
      }
      // A text of none of the words passes no test.
      expect(gate.test('Oxygen therapy as charted, see notes')).toBe(false);
    }
  });

  describe('edge cases', () => {
    it.each(['VENTURI 28%', 'via NP 2L', 'İNNER NIV', 'O2 MASK 5L', 'Nasal Cannulae 2 L/min', 'HFNO 40 L/min FiO2 0.4'])(
      'finds in %j what an ungated search finds',
      (text) => {
        const ungated = DEVICE_PATTERNS.flatMap(({ device, pattern }) => [...text.matchAll(pattern)].map((m) => `${device}@${m.index}`));
        const gated = findDeviceMentions(text).map((m) => `${m.device}@${m.start}`);
        expect(gated.every((g) => ungated.includes(g))).toBe(true);
        expect(gated.length).toBeGreaterThan(0);
      },
    );
  });

  /**
   * What findDeviceMentions would find with no gates: every pattern run on every text, the first
   * pattern's mention kept where two overlap, in order of place.
   */
  function ungated(text: string): DeviceMention[] {
    const found: DeviceMention[] = [];
    for (const { device, pattern, specific } of DEVICE_PATTERNS) {
      for (const m of text.matchAll(pattern)) {
        const start = m.index;
        const end = start + m[0].length;
        if (!found.some((f) => start < f.end && end > f.start)) found.push({ device, text: m[0], start, end, specific });
      }
    }
    return found.sort((a, b) => a.start - b.start);
  }

  /** Device words and shorthands of the trade (docs/basis/devices.md, common practice), flows, and filler. */
  const DEVICE_WORDS = [
    'nasal cannula', 'nasal prongs', 'NC', 'n/c', 'NP', 'prongs', 'specs', 'simple face mask', 'Hudson', 'MC mask',
    'FM', 'SFM', 'Venturi', '28% mask', 'V28', 'VM 24', 'VM', 'HAFOE', 'air-entrainment mask', 'non-rebreather',
    'NRB', 'reservoir mask', '15L mask', 'trauma mask', 'HFNC', 'HFNO', 'high flow', 'high-flow nasal', 'trach mask',
    'stoma mask', 'CPAP', 'NIV', 'BiPAP', 'bilevel', 'face mask', 'O2 mask',
  ];
  const FLOWS = ['2L', '2 L/min', '4 lpm', '15 litres', '0.5L', '60%', '28 %'];
  const FILLER = ['Oxygen', 'via', 'per', 'on', 'at', 'and', 'then', 'home', 'target SpO2 88-92%', ',', '.', 'wean', 'seen by'];
  const textOf = (words: readonly string[]): fc.Arbitrary<string> =>
    fc.array(fc.constantFrom(...words), { maxLength: 10 }).chain((parts) =>
      fc.constantFrom(' ', '  ').map((gap) => parts.join(gap)),
    );

  it('never hide a mention: on texts of device words, flows and filler the gated search finds what the ungated one does', () => {
    const cases = fc.oneof(textOf([...DEVICE_WORDS, ...FLOWS, ...FILLER]), textOf([...DEVICE_WORDS, ...FLOWS, ...FILLER]).map((t) => t.toUpperCase()));
    fc.assert(
      fc.property(cases, (text) => {
        expect(findDeviceMentions(text)).toStrictEqual(ungated(text));
      }),
      { numRuns: 3000 },
    );
    // Every example word of every pattern is still found with the gates on.
    for (const word of DEVICE_WORDS) {
      expect(findDeviceMentions(`Oxygen 2L via ${word}`)).toStrictEqual(ungated(`Oxygen 2L via ${word}`));
    }
    expect(new Set(DEVICE_WORDS.flatMap((w) => findDeviceMentions(`Oxygen 2L via ${w}`).map((m) => m.device))).size).toBe(7);
  });

  it('texts without a pattern\'s needed words give that pattern no match, gated or not', () => {
    for (const { device, pattern, needs, gate } of GATED_DEVICE_PATTERNS) {
      // Device words that hold none of this pattern's needed words, with flows and filler.
      const without = [...DEVICE_WORDS, ...FLOWS, ...FILLER].filter((w) => !needs.some((n) => w.toLowerCase().includes(n)));
      fc.assert(
        fc.property(textOf(without), (text) => {
          expect(gate.test(text)).toBe(false);
          expect([...text.matchAll(pattern)].map((m) => m[0])).toStrictEqual([]);
          expect(findDeviceMentions(text).filter((m) => m.device === device && m.specific === DEVICE_PATTERNS.find((p) => p.pattern === pattern)?.specific)).toStrictEqual(
            ungated(text).filter((m) => m.device === device && m.specific === DEVICE_PATTERNS.find((p) => p.pattern === pattern)?.specific),
          );
        }),
        { numRuns: 300 },
      );
    }
  });

  it('the look-aheads in front of the slow look-behinds change no match', () => {
    // The same patterns with the look-aheads taken out: the form they had before.
    const LOOK_AHEAD = /\(\?=(?:\(\?:[A-Za-z|]+\)|[A-Za-z]+)\\b\)|\(\?=\\d\\d \?% \?mask\)/g;
    let removed = 0;
    const plain = DEVICE_PATTERNS.map(({ pattern }) => {
      const source = pattern.source.replace(LOOK_AHEAD, () => {
        removed += 1;
        return '';
      });
      return new RegExp(source, pattern.flags);
    });
    expect(removed).toBe(4); // NP/prongs/specs, FM/SFM, VM, and "28% mask"
    const same = (text: string): void => {
      DEVICE_PATTERNS.forEach(({ pattern }, i) => {
        const a = [...text.matchAll(pattern)].map((m) => `${m.index}:${m[0]}`);
        const b = [...text.matchAll(plain[i] ?? pattern)].map((m) => `${m.index}:${m[0]}`);
        expect(a).toStrictEqual(b);
      });
    };
    texts.forEach(same);
    fc.assert(fc.property(textOf([...DEVICE_WORDS, ...FLOWS, ...FILLER]), same), { numRuns: 300 });
  });
});
