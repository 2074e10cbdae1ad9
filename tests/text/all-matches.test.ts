import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { allMatches } from '../../src/text/all-matches.js';

/**
 * `allMatches` stands in for `String.prototype.matchAll` (ECMA-262, §22.1.3.14 and RegExp
 * [Symbol.matchAll]) in the free-text readers, so it must find exactly what `matchAll` finds: the
 * same matches, at the same indexes, with the same groups, including the empty matches that matchAll
 * steps past one character (one code point with the u flag) at a time.
 */

const PATTERNS: readonly RegExp[] = [
  /\d{2,3}/g,
  /(?<![\d.])(\d+)(?:\s*-\s*(\d+))?\s*%?/gi,
  /\b(?:sats?|spo2)\b/gi,
  /x*/g, // matches the empty string everywhere
  /(?=a)|b/g, // empty and non-empty matches mixed
  /[;\n]|\.(?:\s|$)/g,
  /./gu, // one code point at a time, surrogate pairs whole
  /(?:)/gu, // empty matches stepping over surrogate pairs
  /\p{L}+/gu,
];

/** Texts over a small alphabet that the patterns above care about, with a surrogate pair. */
const TEXT = fc
  .array(fc.constantFrom('a', 'b', 'x', 'S', 'p', 'O', '2', '9', '4', '-', '%', '.', ';', ' ', '\n', 'sats', 'SpO2', '😀', '\uD83D'), {
    maxLength: 30,
  })
  .map((parts) => parts.join(''));

function viaMatchAll(pattern: RegExp, text: string): unknown[] {
  return [...text.matchAll(pattern)].map((m) => ({ index: m.index, groups: [...m] }));
}

function viaAllMatches(pattern: RegExp, text: string): unknown[] {
  return allMatches(pattern, text).map((m) => ({ index: m.index, groups: [...m] }));
}

describe('allMatches', () => {
  it('finds what matchAll finds, for every pattern and text', () => {
    fc.assert(
      fc.property(fc.constantFrom(...PATTERNS), TEXT, (pattern, text) => {
        expect(viaAllMatches(pattern, text)).toEqual(viaMatchAll(pattern, text));
      }),
      { numRuns: 2000 },
    );
  });

  it('leaves the pattern ready for the next call, even when used again inside a loop over its result', () => {
    const pattern = /\d+/g;
    const text = '88-92 then 94-98';
    const inner: number[] = [];
    for (const m of allMatches(pattern, text)) {
      inner.push(allMatches(pattern, text.slice(m.index)).length);
    }
    expect(inner).toEqual([4, 3, 2, 1]); // four numbers, then fewer from each later start
    expect(pattern.lastIndex).toBe(0);
  });

  it('refuses a pattern without the g flag, as matchAll does', () => {
    expect(() => allMatches(/\d/, '1')).toThrow(TypeError);
    expect(() => '1'.matchAll(/\d/)).toThrow(TypeError);
  });
});
