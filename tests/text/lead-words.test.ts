import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { leadWordFinder } from '../../src/text/lead-words.js';

/**
 * leadWordFinder must flag a key wherever one of its lead words starts a word, as `\b` with the i
 * flag finds it: the reference below runs one such pattern per lead word. Words and keys are
 * invented for the test.
 */

const LEADS = new Map<string, readonly string[]>([
  ['a', ['co', 'chest']],
  ['b', ['copd', 'cold']],
  ['c', ['c']],
  ['d', ['x2', 'post']],
  ['e', ['chest']],
]);
const finder = leadWordFinder(LEADS);
const find = (text: string): ReadonlySet<string> => finder([text]);

function reference(text: string): Set<string> {
  const found = new Set<string>();
  for (const [key, words] of LEADS) {
    if (words.some((w) => new RegExp(`\\b${w}`, 'i').test(text))) found.add(key);
  }
  return found;
}

describe('leadWordFinder', () => {
  it('flags the keys whose lead words start a word, in any letter case', () => {
    expect(find('Chronic COPD')).toStrictEqual(new Set(['a', 'b', 'c']));
    expect(find('post-polio, x2')).toStrictEqual(new Set(['d']));
    expect(find('chest wall')).toStrictEqual(new Set(['a', 'c', 'e']));
    expect(find('')).toStrictEqual(new Set());
  });

  it('flags nothing for a lead word inside a word, and nothing for non-ASCII letters the i flag does not fold', () => {
    expect(find('unicode xcopd')).toStrictEqual(new Set());
    expect(find('\u212Aold \u0130nner')).toStrictEqual(new Set()); // Kelvin sign, dotted capital I
    expect(find('_copd')).toStrictEqual(new Set());
  });

  it('refuses a lead word that is not lower-case letters and digits', () => {
    expect(() => leadWordFinder(new Map([['k', ['Copd']]]))).toThrow(TypeError);
    expect(() => leadWordFinder(new Map([['k', ['chest wall']]]))).toThrow(TypeError);
    expect(() => leadWordFinder(new Map([['k', ['n/c']]]))).toThrow(TypeError);
  });

  it('flags the keys of every text it is given', () => {
    expect(finder(['copd', 'x2'])).toStrictEqual(new Set(['a', 'b', 'c', 'd']));
    expect(finder([])).toStrictEqual(new Set());
  });

  it('finds what one pattern per lead word finds, on texts of lead words, prefixes and separators', () => {
    const parts = fc.constantFrom('co', 'copd', 'COLD', 'chest', 'c', 'x2', 'X', '2', 'post', 'o', 'd', ' ', '-', '.', '_', 'é', '\u212A');
    const text = fc.array(parts, { maxLength: 12 }).map((p) => p.join(''));
    fc.assert(
      fc.property(text, (t) => {
        expect(find(t)).toStrictEqual(reference(t));
      }),
      { numRuns: 3000 },
    );
  });
});
