import { spawnSync } from 'node:child_process';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { MicroChildJob, MicroChildOutput } from './micro-child.js';
import type { BuiltService } from './service-process.js';

/**
 * Runs the in-process micro-benchmarks in a child on the same code as the service under test
 * (bench/micro-child.ts): the private build by plain `node` under `--runner dist`, src/ through tsx
 * under `--runner tsx`. The bench waits for it: nothing else runs meanwhile.
 */
const CHILD_TIMEOUT_MS = 30 * 60_000;

export function runMicroChild(root: string, built: BuiltService, job: MicroChildJob): MicroChildOutput {
  const jobFile = join(job.scratch, 'micro-job.json');
  writeFileSync(jobFile, JSON.stringify(job));
  const child = spawnSync(process.execPath, [...built.benchEntry('micro-child'), jobFile], {
    cwd: root,
    encoding: 'utf8',
    timeout: CHILD_TIMEOUT_MS,
    maxBuffer: 16 * 1024 * 1024,
    stdio: ['ignore', 'pipe', 'inherit'],
  });
  if (child.status !== 0) {
    throw new Error(`the micro-benchmark child failed (exit ${String(child.status)}${child.signal === null ? '' : `, ${child.signal}`})`);
  }
  const line = child.stdout.trim().split('\n').at(-1) ?? '';
  return JSON.parse(line) as MicroChildOutput;
}
