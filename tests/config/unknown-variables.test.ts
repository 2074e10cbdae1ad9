import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { describe, expect, it } from 'vitest';
import { CONFIG_PREFIX, KNOWN_VARIABLES, RETIRED_PREFIX, parseEnvConfig } from '../../src/config/env-config.js';
import { editDistance, nearestName, renamedVariables, unknownVariables } from '../../src/config/unknown-variables.js';

const SRC = fileURLToPath(new URL('../../src', import.meta.url));

function sourceFiles(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((entry) => {
    const path = join(dir, entry.name);
    return entry.isDirectory() ? sourceFiles(path) : entry.name.endsWith('.ts') ? [path] : [];
  });
}

/** A small deterministic generator (a linear congruential one), so the property checks repeat. */
function words(count: number): string[] {
  let state = 12_345;
  const next = (n: number): number => {
    state = (state * 1_103_515_245 + 12_345) % 2_147_483_648;
    return state % n;
  };
  return Array.from({ length: count }, () =>
    Array.from({ length: next(8) }, () => 'ABC_'[next(4)] ?? '').join(''),
  );
}

describe('editDistance', () => {
  it.each([
    ['kitten', 'sitting', 3], // Levenshtein distance, the textbook example (Wikipedia, "Levenshtein distance")
    ['CA', 'AC', 1], // one adjacent swap (Wikipedia, "Damerau–Levenshtein distance")
    ['CA', 'ABC', 3], // optimal string alignment: no edit of a swapped pair (Wikipedia, "Damerau–Levenshtein distance")
    ['', 'ABC', 3], // common practice: all insertions
    ['OXYGEN_CHECKER_BODY_LIMIT_BYTE', 'OXYGEN_CHECKER_BODY_LIMIT_BYTES', 1], // common practice: one insertion
  ])('gives %s to %s as %i', (a, b, distance) => {
    expect(editDistance(a, b)).toBe(distance);
    expect(editDistance(b, a)).toBe(distance);
  });

  it('is zero exactly for equal strings, symmetric, and between the length difference and the longer length', () => {
    const sample = words(40);
    for (const a of sample) {
      for (const b of sample) {
        const d = editDistance(a, b);
        expect(d === 0).toBe(a === b);
        expect(editDistance(b, a)).toBe(d);
        expect(d).toBeGreaterThanOrEqual(Math.abs(a.length - b.length));
        expect(d).toBeLessThanOrEqual(Math.max(a.length, b.length));
      }
    }
  });

  it('counts one insertion, deletion, substitution or adjacent swap as one edit', () => {
    for (const word of words(40).filter((w) => w.length >= 2)) {
      const swapped = word[1]! + word[0]! + word.slice(2);
      const edited = [
        `X${word}`,
        word.slice(1),
        `X${word.slice(1)}`,
        ...(swapped === word ? [] : [swapped]),
      ];
      for (const other of edited) {
        expect(editDistance(word, other)).toBe(1);
      }
    }
  });
});

describe('nearestName', () => {
  const known = ['OXYGEN_CHECKER_TRUST', 'OXYGEN_CHECKER_POLICY', 'OXYGEN_CHECKER_PUBLIC_URL'];

  it('picks the closest known name and ignores case', () => {
    expect(nearestName('OXYGEN_CHECKER_POLCY', known, CONFIG_PREFIX)).toBe('OXYGEN_CHECKER_POLICY');
    expect(nearestName('oxygen_checker_trust', known, CONFIG_PREFIX)).toBe('OXYGEN_CHECKER_TRUST');
  });

  it('suggests nothing when every known name is far away', () => {
    expect(nearestName('OXYGEN_CHECKER_VERBOSE', known, CONFIG_PREFIX)).toBeUndefined();
  });
});

describe('the known variables', () => {
  it('include every prefixed name written anywhere in src/, so a new setting cannot be left off', () => {
    const found = new Set<string>();
    for (const file of sourceFiles(SRC)) {
      for (const match of readFileSync(file, 'utf8').matchAll(/OXYGEN_CHECKER_[A-Z0-9_]+/g)) {
        found.add(match[0]);
      }
    }
    // src/ names dozens of settings; an empty set would mean the scan looked in the wrong place.
    expect(found.size).toBeGreaterThan(20);
    expect([...found].filter((name) => !KNOWN_VARIABLES.includes(name)).sort()).toStrictEqual([]);
  });

  it('are themselves never refused, and each is its own nearest name', () => {
    const env = Object.fromEntries(KNOWN_VARIABLES.map((name) => [name, 'x']));
    expect(unknownVariables(env, KNOWN_VARIABLES, CONFIG_PREFIX)).toStrictEqual([]);
    for (const name of KNOWN_VARIABLES) {
      expect(nearestName(name, KNOWN_VARIABLES, CONFIG_PREFIX)).toBe(name);
    }
  });
});

describe('variables left over from the retired prefix', () => {
  it('are refused with the name each setting has now, so an upgrade keeps every setting', () => {
    const env = { O2CHECK_POLICY: '/etc/oxygen/policy.yaml', o2check_data_dir: '/var/lib/oxygen', O2CHECK_COLOUR: 'x' };
    expect(renamedVariables(env, KNOWN_VARIABLES, RETIRED_PREFIX, CONFIG_PREFIX)).toStrictEqual([
      { variable: 'O2CHECK_COLOUR', message: 'uses the prefix this service had before version 0.2 and names no current setting; remove it' },
      { variable: 'O2CHECK_POLICY', message: 'uses the prefix this service had before version 0.2; rename it to OXYGEN_CHECKER_POLICY' },
      { variable: 'o2check_data_dir', message: 'uses the prefix this service had before version 0.2; rename it to OXYGEN_CHECKER_DATA_DIR' },
    ]);
  });

  it('stop the service from starting, in demo mode as in production', () => {
    for (const mode of ['demo', 'production']) {
      const result = parseEnvConfig({ OXYGEN_CHECKER_MODE: mode, O2CHECK_TRUST: '/etc/oxygen/trust.json' }, '/srv');
      expect(result.kind === 'invalid' && result.problems.map((p) => p.variable)).toContain('O2CHECK_TRUST');
    }
  });
});
