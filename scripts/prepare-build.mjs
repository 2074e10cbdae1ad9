#!/usr/bin/env node
// `npm ci` runs this as `prepare`. On a development clone (the TypeScript compiler installed, as by a
// plain `npm ci`) it builds dist/ with `npm run build`, so the README's `npm ci && npm start` works.
// On a production install (`npm ci --omit=dev` of a tree that already has dist/, as in the image's
// runtime stage) there is no compiler and nothing to build, so it says so and succeeds. With neither
// a compiler nor dist/ the install could not run, so it fails and says what to do.
// Plain JavaScript on purpose: it must run where only production dependencies are installed.
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { createRequire } from 'node:module';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';

const root = join(dirname(fileURLToPath(import.meta.url)), '..');

function compilerInstalled() {
  try {
    createRequire(join(root, 'package.json')).resolve('typescript/package.json');
    return true;
  } catch {
    return false;
  }
}

if (compilerInstalled()) {
  // npm sets npm_execpath to its own CLI script when it runs a lifecycle script.
  const npmCli = process.env.npm_execpath;
  const run =
    npmCli !== undefined && npmCli.endsWith('.js')
      ? spawnSync(process.execPath, [npmCli, 'run', 'build'], { cwd: root, stdio: 'inherit' })
      : spawnSync('npm', ['run', 'build'], { cwd: root, stdio: 'inherit', shell: process.platform === 'win32' });
  process.exit(run.status ?? 1);
} else if (existsSync(join(root, 'dist', 'server.js'))) {
  console.log('prepare: no TypeScript compiler installed (production install); using the built dist/ as it is');
} else {
  console.error(
    'prepare: dist/ is not built and the TypeScript compiler is not installed, so the service cannot run.\n' +
      '  On a clone: run `npm ci` (with development dependencies), which builds dist/.\n' +
      '  For a production install: build first (`npm ci && npm run build`), then copy dist/ with\n' +
      '  package.json and package-lock.json and run `npm ci --omit=dev` there (docs/deployment.md).',
  );
  process.exit(1);
}
