import { mkdirSync, mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import ts from 'typescript';

/**
 * Every store the tests open starts a worker thread (src/store/worker-store.ts). Under the test runner
 * that thread is TypeScript, and registering tsx in each new thread took a second or more of every
 * store opened, hundreds of times a run. So before the tests, the thread's entry and the files it
 * imports are transpiled once here, as the build does, and src/store/store-worker-tsx.mjs loads them
 * from the directory named in TEST_STORE_WORKER_ENTRY (child processes the tests start inherit it).
 * The directory is under the checkout, so better-sqlite3 resolves from its node_modules.
 */

const ROOT = fileURLToPath(new URL('..', import.meta.url));
const ENTRY = join(ROOT, 'src', 'store', 'store-worker.ts');

/** The entry and every file it imports at run time (relative imports; type-only ones are dropped). */
function runtimeClosure(entry: string): string[] {
  const files = new Set<string>();
  const visit = (file: string): void => {
    if (files.has(file)) return;
    files.add(file);
    const text = readFileSync(file, 'utf8');
    for (const imported of ts.preProcessFile(text, true, true).importedFiles) {
      if (imported.fileName.startsWith('.')) {
        visit(resolve(dirname(file), imported.fileName).replace(/\.js$/, '.ts'));
      }
    }
  };
  visit(entry);
  return [...files];
}

export default function setup(): () => void {
  mkdirSync(join(ROOT, 'test-output'), { recursive: true });
  const outDir = mkdtempSync(join(ROOT, 'test-output', 'store-worker-'));
  for (const file of runtimeClosure(ENTRY)) {
    const { outputText } = ts.transpileModule(readFileSync(file, 'utf8'), {
      fileName: file,
      compilerOptions: { module: ts.ModuleKind.ESNext, target: ts.ScriptTarget.ES2022, verbatimModuleSyntax: true },
    });
    const out = join(outDir, relative(ROOT, file)).replace(/\.ts$/, '.js');
    mkdirSync(dirname(out), { recursive: true });
    writeFileSync(out, outputText);
  }
  process.env['TEST_STORE_WORKER_ENTRY'] = pathToFileURL(join(outDir, 'src', 'store', 'store-worker.js')).href;
  return () => {
    delete process.env['TEST_STORE_WORKER_ENTRY'];
    rmSync(outDir, { recursive: true, force: true });
  };
}
