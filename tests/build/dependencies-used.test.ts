import { readdirSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';

/**
 * Every production dependency is one the service's own code imports: a package installed on every
 * host but used by nothing only widens what must be kept patched (common practice).
 */

const root = new URL('../..', import.meta.url).pathname;
const pkg = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8')) as { dependencies: Record<string, string> };

function sourceFiles(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((entry) => {
    const path = join(dir, entry.name);
    if (entry.isDirectory()) {
      return sourceFiles(path);
    }
    return entry.name.endsWith('.ts') ? [path] : [];
  });
}

const importedPackages = new Set(
  sourceFiles(join(root, 'src')).flatMap((file) =>
    [...readFileSync(file, 'utf8').matchAll(/(?:from|import\()\s*['"]([^'"./][^'"]*)['"]/g)].map((match) => {
      const spec = match[1] ?? '';
      // '@scope/name/sub' → '@scope/name'; 'name/sub' → 'name'
      return spec.startsWith('@') ? spec.split('/').slice(0, 2).join('/') : (spec.split('/')[0] ?? spec);
    }),
  ),
);

/**
 * Listed for work not yet merged. Each entry must really be unused, so this list cannot go stale.
 */
const AWAITING_USE: ReadonlySet<string> = new Set<string>([]);

describe('production dependencies', () => {
  it.each(Object.keys(pkg.dependencies).filter((name) => !AWAITING_USE.has(name)))('%s is imported by src/', (name) => {
    expect(importedPackages.has(name), `${name} is listed in dependencies but nothing in src/ imports it`).toBe(true);
  });

  it.each([...AWAITING_USE])('%s, listed as awaiting use, is still a dependency that src/ does not import yet', (name) => {
    expect(Object.keys(pkg.dependencies)).toContain(name);
    expect(importedPackages.has(name), `${name} is now imported: take it off AWAITING_USE`).toBe(false);
  });

  it('the import scan finds the packages the service is built on', () => {
    expect([...importedPackages]).toEqual(expect.arrayContaining(['express', 'zod', 'pino']));
  });
});
