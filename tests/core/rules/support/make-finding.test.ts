import { describe, expect, it } from 'vitest';
import { firstOfEach, makeFinding } from '../../../../src/core/rules/support/make-finding.js';

describe('firstOfEach', () => {
  it('keeps each key once, where it first appears', () => {
    expect(firstOfEach(['bts-2017', 'local-policy', 'bts-2017', 'alveolar-gas', 'local-policy'])).toStrictEqual([
      'bts-2017',
      'local-policy',
      'alveolar-gas',
    ]);
    expect(firstOfEach([])).toStrictEqual([]);
  });

  it('gives what a Set in insertion order gives, on lists with and without repeats', () => {
    const pool = ['a', 'b', 'c', 'd', 'e'];
    for (let seed = 1; seed <= 200; seed += 1) {
      // A small linear congruential sequence: the same lists on every run.
      let state = seed;
      const next = (): number => {
        state = (state * 1103515245 + 12345) % 2147483648;
        return state;
      };
      const keys = Array.from({ length: next() % 9 }, () => pool[next() % pool.length] ?? 'a');
      expect(firstOfEach(keys)).toStrictEqual([...new Set(keys)]);
    }
  });
});

describe('makeFinding', () => {
  it('cites each source once, in the order the rule gave them', () => {
    const finding = makeFinding(
      { id: 'oxygenation-summary', version: 3, defaultIndicator: 'info' },
      { orderReference: undefined, values: {}, sourceKeys: ['alveolar-gas', 'bts-2017', 'alveolar-gas'] },
    );
    expect(finding.sourceKeys).toStrictEqual(['alveolar-gas', 'bts-2017']);
    expect(finding.indicator).toBe('info');
  });
});
