import { readFileSync } from 'node:fs';
import type { CliIo } from '../../src/cli/cli-io.js';
import { runCli } from '../../src/cli/run-cli.js';

export interface CliRun {
  readonly code: number;
  readonly stdout: string;
  readonly stderr: string;
}

/** Runs the CLI in-process with captured output and a fixed clock. */
export async function runCommandLine(
  argv: readonly string[],
  now = new Date('2026-12-01T12:00:00Z'),
  /** The environment and working directory, for the commands that read them. */
  shell: Pick<CliIo, 'env' | 'cwd'> = {},
): Promise<CliRun> {
  let stdout = '';
  let stderr = '';
  const io: CliIo = {
    stdout: (text) => {
      stdout += text;
    },
    stderr: (text) => {
      stderr += text;
    },
    readFile: (path) => readFileSync(path, 'utf8'),
    now: () => now,
    ...shell,
  };
  const code = await runCli(argv, io);
  return { code, stdout, stderr };
}

export const examplePath = (name: string): string =>
  new URL(`../../examples/${name}.json`, import.meta.url).pathname;
