import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import { describe, expect, it } from 'vitest';

// House style: src/core is pure (no I/O, clock, randomness, logger or framework), and src/fhir and
// src/cds read and write data without I/O, and src/review renders pages without I/O or a clock. These
// checks keep that true as the code grows.
const root = new URL('../../', import.meta.url).pathname;

function sourceFiles(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(dir)) {
    const path = join(dir, name);
    if (statSync(path).isDirectory()) {
      out.push(...sourceFiles(path));
    } else if (path.endsWith('.ts')) {
      out.push(path);
    }
  }
  return out;
}

function importsOf(text: string): string[] {
  return [...text.matchAll(/(?:import|export)\s[^'"]*?from\s+['"]([^'"]+)['"]/g)].map((m) => m[1] ?? '');
}

const impure = [
  { pattern: /\bDate\.now\(|\bnew Date\(\s*\)/, what: 'reads the clock' },
  { pattern: /\bMath\.random\(/, what: 'uses randomness' },
  { pattern: /\bprocess\./, what: 'touches process' },
  { pattern: /\bconsole\./, what: 'logs to the console' },
];

describe('the pure core', () => {
  const coreFiles = sourceFiles(join(root, 'src/core'));

  it('has source files to check', () => {
    expect(coreFiles.length).toBeGreaterThan(2);
  });

  it.each(coreFiles.map((f) => [relative(root, f), f]))('%s imports only from src/core', (_name, file) => {
    const outside = importsOf(readFileSync(file, 'utf8')).filter((spec) => {
      if (!spec.startsWith('.')) return true;
      return !join(file, '..', spec).startsWith(join(root, 'src/core'));
    });
    expect(outside).toStrictEqual([]);
  });
});

describe.each(['src/core', 'src/fhir', 'src/cds', 'src/review'])('%s', (folder) => {
  const files = sourceFiles(join(root, folder));
  it.each(files.map((f) => [relative(root, f), f]))('%s has no clock, randomness, process or console', (_n, file) => {
    const text = readFileSync(file, 'utf8');
    const found = impure.filter((rule) => rule.pattern.test(text)).map((rule) => rule.what);
    expect(found).toStrictEqual([]);
  });

  it.each(files.map((f) => [relative(root, f), f]))('%s does no I/O and uses no framework', (_n, file) => {
    const banned = importsOf(readFileSync(file, 'utf8')).filter((spec) =>
      /^(node:)?(fs|fs\/promises|http|https|net|child_process)$|^(express|pino|pino-http)$/.test(spec),
    );
    expect(banned).toStrictEqual([]);
  });
});
