import { describe, expect, it } from 'vitest';
import { oncePerObject } from '../../src/core/once-per-object.js';

describe('oncePerObject', () => {
  it('builds once for each key object, and separately for another object of equal content', () => {
    const built: object[] = [];
    const sizeOf = oncePerObject((key: { readonly ids: readonly string[] }) => {
      built.push(key);
      return new Set(key.ids);
    });
    const first = Object.freeze({ ids: ['a', 'b'] });
    const twin = Object.freeze({ ids: ['a', 'b'] });
    expect(sizeOf(first)).toBe(sizeOf(first));
    expect(sizeOf(twin)).not.toBe(sizeOf(first));
    expect(built).toStrictEqual([first, twin]);
  });

  it('remembers a build that answered undefined', () => {
    let calls = 0;
    const nothing = oncePerObject((_key: object): undefined => {
      calls += 1;
      return undefined;
    });
    const key = {};
    nothing(key);
    nothing(key);
    expect(calls).toBe(1);
  });
});
