import { readdirSync, readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { DEVICE_PATTERNS, GATED_DEVICE_PATTERNS, findDeviceMentions } from '../../src/fhir/read-device-text.js';

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
});
