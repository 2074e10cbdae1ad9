import { readdirSync, readFileSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import ts from 'typescript';
import { describe, expect, it } from 'vitest';
import { isWaiting } from '../test-groups.js';

// The suite's computing group runs two files at once in shared workers (vitest.config.ts). A file that
// starts a server, a process, a thread, a browser or a database, or fakes the clock, belongs in the
// waiting group, where such files run one at a time in a fresh process: this check keeps new ones there.
const root = new URL('../../', import.meta.url).pathname;

function testFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const path = join(dir, name);
    return statSync(path).isDirectory() ? testFiles(path) : path.endsWith('.test.ts') ? [path] : [];
  });
}

/** What makes a file start something or wait on it: the modules it imports, and two calls. */
const STARTS = [
  { what: 'imports child_process', test: (imports: readonly string[]) => imports.some((m) => /^(node:)?child_process$/.test(m)) },
  { what: 'imports http, https or net', test: (imports: readonly string[]) => imports.some((m) => /^(node:)?(http|https|net)$/.test(m)) },
  { what: 'imports a browser or PostgreSQL driver', test: (imports: readonly string[]) => imports.some((m) => m === 'playwright-core' || m === 'pg') },
  { what: 'opens a store or the service', test: (imports: readonly string[]) => imports.some((m) => /\/src\/(store\/(open-store|worker-store|sqlite-store|postgres-store)|server|http\/app|cluster\/[^/]+)\.js$/.test(m)) },
];
const CALLS = [
  { what: 'fakes the clock (vi.useFakeTimers)', pattern: /\bvi\.useFakeTimers\(/ },
  { what: 'listens on a port', pattern: /\.listen\(/ },
];

function startsSomething(file: string): string[] {
  const text = readFileSync(file, 'utf8');
  const imports = ts.preProcessFile(text, true, true).importedFiles.map((f) => f.fileName);
  return [...STARTS.filter((s) => s.test(imports)).map((s) => s.what), ...CALLS.filter((c) => c.pattern.test(text)).map((c) => c.what)];
}

describe('test groups', () => {
  const files = testFiles(join(root, 'tests')).map((path) => relative(root, path));

  it('puts no file that starts something in the computing group', () => {
    const misplaced = files
      .filter((file) => !isWaiting(file))
      .map((file) => ({ file, starts: startsSomething(join(root, file)) }))
      .filter((entry) => entry.starts.length > 0);
    expect(misplaced).toStrictEqual([]);
  });

  it('recognises the files that do start something', () => {
    // The check above can fail: the waiting group's own files are caught by it, one kind each at least.
    const caught = files.filter(isWaiting).flatMap((file) => startsSomething(join(root, file)));
    for (const kind of [...STARTS, ...CALLS].map((s) => s.what)) {
      expect(caught, kind).toContain(kind);
    }
  });
});
