import { describe, expect, it } from 'vitest';
import { capList, capOptional, capText, LOGGED_LIST_MAX_ITEMS, LOGGED_TEXT_MAX_CHARS } from '../../src/log/cap-text.js';

describe('capText', () => {
  it.each([0, 1, LOGGED_TEXT_MAX_CHARS - 1, LOGGED_TEXT_MAX_CHARS])('leaves text of %i characters as it is', (length) => {
    const text = 'k'.repeat(length);
    expect(capText(text)).toBe(text);
  });

  it.each([LOGGED_TEXT_MAX_CHARS + 1, 2_500, 100_000, 1_048_576])('cuts text of %i characters, keeping its start and length', (length) => {
    const text = 'a'.repeat(length);
    const capped = capText(text);
    expect(capped.startsWith('a'.repeat(LOGGED_TEXT_MAX_CHARS))).toBe(true);
    expect(capped).toBe(`${'a'.repeat(LOGGED_TEXT_MAX_CHARS)}…[cut from ${length} chars]`);
    expect(capped.length).toBeLessThan(LOGGED_TEXT_MAX_CHARS + 40);
  });

  it('never leaves half a surrogate pair at the cut', () => {
    // U+1F4A8 is two UTF-16 code units; placed so the cut would fall between them.
    const text = `${'b'.repeat(LOGGED_TEXT_MAX_CHARS - 1)}\u{1F4A8}tail`;
    const capped = capText(text);
    expect(capped).toBe(`${'b'.repeat(LOGGED_TEXT_MAX_CHARS - 1)}…[cut from ${text.length} chars]`);
    expect(Buffer.from(capped, 'utf8').toString('utf8')).toBe(capped);
  });

  it('takes its own limit, and passes undefined through', () => {
    expect(capText('abcdef', 3)).toBe('abc…[cut from 6 chars]');
    expect(capOptional(undefined)).toBeUndefined();
    expect(capOptional('x'.repeat(500))).toContain('[cut from 500 chars]');
  });
});

describe('capList', () => {
  it('caps each item and the number of items, counting those left out', () => {
    const items = Array.from({ length: LOGGED_LIST_MAX_ITEMS + 7 }, () => 'z'.repeat(1000));
    const capped = capList(items);
    expect(capped).toHaveLength(LOGGED_LIST_MAX_ITEMS + 1);
    expect(capped.at(-1)).toBe('…[7 more]');
    for (const item of capped.slice(0, -1)) expect(item).toBe(capText('z'.repeat(1000)));
  });

  it('leaves a short list of short items as it is', () => {
    expect(capList(['observations', 'patient'])).toStrictEqual(['observations', 'patient']);
  });
});
