import { describe, expect, it } from 'vitest';
import { oncePerPolicy, oncePerPolicyAndKey } from '../../src/cds/once-per-policy.js';
import { bundledPolicy } from './support/card-inputs.js';

describe('oncePerPolicy', () => {
  it('builds once for a policy object and again for another one', () => {
    const policy = bundledPolicy();
    const reloaded = bundledPolicy();
    const seen: string[] = [];
    const title = oncePerPolicy((p) => {
      seen.push(p.id);
      return { title: p.title };
    });
    const first = title(policy);
    expect(title(policy)).toBe(first);
    expect(title(reloaded)).not.toBe(first);
    expect(title(reloaded)).toStrictEqual(first);
    expect(seen).toStrictEqual([policy.id, reloaded.id]);
  });
});

describe('oncePerPolicyAndKey', () => {
  it('builds once per policy and key, never handing one key the value of another', () => {
    const policy = bundledPolicy();
    let builds = 0;
    const labelled = oncePerPolicyAndKey((p, key) => {
      builds += 1;
      return `${p.id}:${key}`;
    });
    expect(labelled(policy, 'a')).toBe(`${policy.id}:a`);
    expect(labelled(policy, 'b')).toBe(`${policy.id}:b`);
    expect(labelled(policy, 'a')).toBe(`${policy.id}:a`);
    expect(builds).toBe(2);
  });

  describe('edge cases', () => {
    it('keeps a value that is undefined rather than building it again', () => {
      const policy = bundledPolicy();
      let builds = 0;
      const nothing = oncePerPolicyAndKey(() => {
        builds += 1;
        return undefined;
      });
      expect(nothing(policy, 'x')).toBeUndefined();
      expect(nothing(policy, 'x')).toBeUndefined();
      expect(builds).toBe(1);
    });
  });
});
