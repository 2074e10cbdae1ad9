import { spawnSync } from 'node:child_process';
import { copyFileSync, existsSync, mkdirSync, mkdtempSync, readFileSync, rmSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';

/**
 * The contract of package.json's scripts (issue 10, "Production build"): starting never runs the
 * compiler; `prepare` builds only where the compiler is installed, passes on a production install
 * that already has dist/, and fails clearly when it has neither.
 */

const ROOT = resolve(import.meta.dirname, '../..');
const PACKAGE = JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8')) as {
  scripts: Record<string, string>;
  files: string[];
};
const PREPARE_SCRIPT = 'scripts/prepare-build.mjs';

/** Every script npm runs for `npm run name`: its pre and post scripts, and any `npm run X` inside them. */
function scriptsRunBy(scripts: Record<string, string>, name: string, seen = new Set<string>()): string[] {
  for (const step of [`pre${name}`, name, `post${name}`]) {
    const command = scripts[step];
    if (command === undefined || seen.has(step)) {
      continue;
    }
    seen.add(step);
    for (const match of command.matchAll(/\bnpm (?:run(?:-script)?|start|test) ?([\w:-]*)/g)) {
      const inner = match[0].startsWith('npm start') ? 'start' : match[0].startsWith('npm test') ? 'test' : match[1];
      if (inner !== undefined && inner !== '') {
        scriptsRunBy(scripts, inner, seen);
      }
    }
  }
  return [...seen];
}

/** True when a command line would run the TypeScript compiler or a TypeScript loader. */
function compiles(command: string): boolean {
  return /\btsc\b|\btsx\b|\btypescript\b|\bnpm run build\b/.test(command);
}

describe('the start script', () => {
  it('runs the built service directly', () => {
    expect(PACKAGE.scripts['start']).toBe('node dist/server.js');
  });

  it('runs no script that compiles, directly or through pre, post or npm run', () => {
    const run = scriptsRunBy(PACKAGE.scripts, 'start');
    expect(run).toContain('start');
    expect(run.filter((step) => compiles(PACKAGE.scripts[step] ?? ''))).toStrictEqual([]);
  });

  it('is told apart from a compiling script by the same check', () => {
    // The check above would pass vacuously if `compiles` never matched: show that it catches the old set-up.
    const old = { prestart: 'npm run build', start: 'node dist/server.js', build: 'tsc -p tsconfig.build.json' };
    expect(scriptsRunBy(old, 'start').filter((step) => compiles(old[step as keyof typeof old]))).toStrictEqual([
      'prestart',
      'build',
    ]);
  });
});

describe('the prepare script', () => {
  it('is the guard, which ships in the package so a production install can run it', () => {
    expect(PACKAGE.scripts['prepare']).toBe(`node ${PREPARE_SCRIPT}`);
    expect(PACKAGE.files).toContain(PREPARE_SCRIPT);
  });

  describe('run in a package tree', () => {
    const made: string[] = [];
    afterEach(() => {
      for (const dir of made.splice(0)) {
        rmSync(dir, { recursive: true, force: true });
      }
    });

    /** A package whose `build` only leaves a marker, with or without a compiler and a built dist/. */
    function tree(options: { compiler: boolean; dist: boolean }): string {
      const dir = mkdtempSync(join(tmpdir(), 'prepare-guard-'));
      made.push(dir);
      mkdirSync(join(dir, 'scripts'));
      copyFileSync(join(ROOT, PREPARE_SCRIPT), join(dir, PREPARE_SCRIPT));
      writeFileSync(
        join(dir, 'package.json'),
        JSON.stringify({ name: 'guard-check', private: true, type: 'module', scripts: { build: 'node -e "require(\'fs\').writeFileSync(\'built\', \'\')"' } }),
      );
      if (options.compiler) {
        mkdirSync(join(dir, 'node_modules'));
        symlinkSync(join(ROOT, 'node_modules', 'typescript'), join(dir, 'node_modules', 'typescript'), 'dir');
      }
      if (options.dist) {
        mkdirSync(join(dir, 'dist'));
        writeFileSync(join(dir, 'dist', 'server.js'), '');
      }
      return dir;
    }

    function prepare(dir: string): { status: number | null; stdout: string; stderr: string } {
      const env = { ...process.env };
      delete env['npm_execpath'];
      const run = spawnSync(process.execPath, [join(dir, PREPARE_SCRIPT)], { cwd: dir, env, encoding: 'utf8' });
      return { status: run.status, stdout: run.stdout, stderr: run.stderr };
    }

    it('builds when the compiler is installed, even over an older dist/', () => {
      for (const dist of [false, true]) {
        const dir = tree({ compiler: true, dist });
        expect(prepare(dir).status).toBe(0);
        expect(existsSync(join(dir, 'built'))).toBe(true);
      }
    });

    it('keeps the built dist/ and succeeds without the compiler (npm ci --omit=dev)', () => {
      const dir = tree({ compiler: false, dist: true });
      const run = prepare(dir);
      expect(run.status).toBe(0);
      expect(existsSync(join(dir, 'built'))).toBe(false);
      expect(run.stdout).toContain('production install');
    });

    it('fails, saying what to do, with neither the compiler nor dist/', () => {
      const dir = tree({ compiler: false, dist: false });
      const run = prepare(dir);
      expect(run.status).toBe(1);
      expect(existsSync(join(dir, 'built'))).toBe(false);
      expect(run.stderr).toContain('dist/ is not built and the TypeScript compiler is not installed');
      expect(run.stderr).toContain('npm ci --omit=dev');
    });
  });
});
