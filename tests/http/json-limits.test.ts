import { describe, expect, it } from 'vitest';
import { findJsonLimitBreach, JSON_LIMITS, type JsonLimits } from '../../src/http/json-limits.js';

/**
 * The structural limits on untrusted JSON (src/http/json-limits.ts): each limit holds at its bound
 * and breaks one past it, wherever in the value it is, and the breach names where. Every body is
 * first checked without building paths and walked again only when it breaks a limit, so these cases
 * pin that both walks agree: on values within the limits, on each kind of breach, and on the order
 * in which several breaches are found. Small limits keep the values small; the bundled limits are
 * common practice (json-limits.ts says why).
 */

const SMALL: JsonLimits = { maxDepth: 4, maxArrayItems: 3, maxStringChars: 5, longTextKeys: new Set(['div']) };

/** `inner` wrapped in `levels` levels, alternating objects and arrays; the path to it. */
function nest(inner: unknown, levels: number): { value: unknown; path: (string | number)[] } {
  let value = inner;
  const path: (string | number)[] = [];
  for (let level = 0; level < levels; level += 1) {
    if (level % 2 === 0) {
      value = { a: value };
      path.unshift('a');
    } else {
      value = [0, value];
      path.unshift(1);
    }
  }
  return { value, path };
}

describe('findJsonLimitBreach', () => {
  it('lets through values at every bound, at every depth they can sit', () => {
    for (let levels = 0; levels <= SMALL.maxDepth - 1; levels += 1) {
      for (const inner of ['12345', [1, 2, 3], { abcde: 'vwxyz' }, null, 7, true, [], {}]) {
        expect(findJsonLimitBreach(nest(inner, levels).value, SMALL)).toBeUndefined();
      }
    }
    // A leaf one level past the depth bound is not a level of objects or arrays.
    expect(findJsonLimitBreach(nest('12345', SMALL.maxDepth).value, SMALL)).toBeUndefined();
  });

  it('names a long string, a long key, a long list and deep nesting wherever they are', () => {
    for (let levels = 0; levels <= SMALL.maxDepth - 1; levels += 1) {
      const text = nest('123456', levels);
      expect(findJsonLimitBreach(text.value, SMALL)).toEqual({ kind: 'string', path: text.path });
      const key = nest({ abcdef: 1 }, levels);
      expect(findJsonLimitBreach(key.value, SMALL)).toEqual({ kind: 'key', path: key.path });
      const list = nest([1, 2, 3, 4], levels);
      expect(findJsonLimitBreach(list.value, SMALL)).toEqual({ kind: 'array', path: list.path });
    }
    for (const inner of [{}, []]) {
      const deep = nest(inner, SMALL.maxDepth);
      expect(findJsonLimitBreach(deep.value, SMALL)).toEqual({ kind: 'depth', path: deep.path });
    }
  });

  it('exempts a long text only as the value of an exempt key, never as a list item under it', () => {
    expect(findJsonLimitBreach({ text: { div: 'x'.repeat(50) } }, SMALL)).toBeUndefined();
    expect(findJsonLimitBreach({ text: { div: ['x'.repeat(50)] } }, SMALL)).toEqual({ kind: 'string', path: ['text', 'div', 0] });
    expect(findJsonLimitBreach({ text: { note: 'x'.repeat(50) } }, SMALL)).toEqual({ kind: 'string', path: ['text', 'note'] });
  });

  it('names one breach, always the same, when there are several', () => {
    // The walk takes an object's keys last first and a list's items first first (json-limits.ts).
    const several = { a: ['ok', 'far too long'], b: [1, 2, 3, 4], c: { abcdefgh: 1 } };
    expect(findJsonLimitBreach(several, SMALL)).toEqual({ kind: 'key', path: ['c'] });
    expect(findJsonLimitBreach({ a: several.a, b: several.b }, SMALL)).toEqual({ kind: 'array', path: ['b'] });
    expect(findJsonLimitBreach([several.a, 'also too long'], SMALL)).toEqual({ kind: 'string', path: [0, 1] });
  });

  it('checks a string sent as the whole body', () => {
    expect(findJsonLimitBreach('12345', SMALL)).toBeUndefined();
    expect(findJsonLimitBreach('123456', SMALL)).toEqual({ kind: 'string', path: [] });
  });

  it('holds the bundled limits at their bounds', () => {
    const atBounds = {
      list: new Array<number>(JSON_LIMITS.maxArrayItems).fill(0),
      text: 'x'.repeat(JSON_LIMITS.maxStringChars),
      deep: nest({}, JSON_LIMITS.maxDepth - 2).value,
    };
    expect(findJsonLimitBreach(atBounds)).toBeUndefined();
    expect(findJsonLimitBreach({ ...atBounds, list: [...atBounds.list, 0] })).toEqual({ kind: 'array', path: ['list'] });
    expect(findJsonLimitBreach({ ...atBounds, deep: nest({}, JSON_LIMITS.maxDepth - 1).value })?.kind).toBe('depth');
  });
});
