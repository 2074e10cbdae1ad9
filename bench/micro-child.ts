import { readFileSync } from 'node:fs';
import { runAuditMicro, type AuditMicroResult, type AuditMicroSettings } from './audit-micro.js';
import type { HookExample } from './cases.js';
import { loadBundledFiles, prepareCase, runMicro, runPhases, type MicroResult, type MicroSettings } from './micro.js';

/**
 * Child entry for the in-process micro-benchmarks (bench/micro.ts, bench/audit-micro.ts), so that they
 * run the code the service runs: under `--runner dist` this file is compiled with the service into the
 * bench's private build and run by plain `node` (bench/service-process.ts, `benchEntry`); under
 * `--runner tsx` it runs through tsx, as the service then does. The bench starts it; it is not meant
 * to be run by hand.
 *
 *   node BUILD/bench/micro-child.js JOB.json     (or: node --import tsx bench/micro-child.ts JOB.json)
 *
 * Prints one JSON line, a `MicroChildOutput`.
 */

export interface MicroChildJob {
  /** Examples for evaluateHook × JSON.parse and the whole pure path, in this order. */
  readonly examples: readonly HookExample[];
  /** Examples for store.recordAdvisories, in this order. */
  readonly auditExamples: readonly HookExample[];
  /** The clock every evaluation reads (ISO 8601). */
  readonly now: string;
  readonly micro: MicroSettings;
  readonly audit: AuditMicroSettings;
  /**
   * Calls of the whole pure path over all `examples` in turn before the first timed loop, so that
   * the optimising compiler has seen every example before any is timed (each example's own warm-up
   * then follows).
   */
  readonly primeCalls: number;
  /** A folder for the audit stores. */
  readonly scratch: string;
}

export interface MicroChildOutput {
  readonly micro: MicroResult[];
  readonly auditMicro: AuditMicroResult[];
}

async function main(jobFile: string): Promise<MicroChildOutput> {
  const job = JSON.parse(readFileSync(jobFile, 'utf8')) as MicroChildJob;
  const now = new Date(job.now);
  const files = await loadBundledFiles();
  const primeSettings: MicroSettings = { iterations: 1, rounds: 1, warmupIterations: 1, maxMsPerLoop: 60_000 };
  // runMicro's warm-up runs evaluateHook and the whole path once each per iteration: two calls.
  const perExample = Math.ceil(job.primeCalls / Math.max(1, job.examples.length) / 2);
  for (const example of job.examples) {
    await runMicro(example, files, now, { ...primeSettings, warmupIterations: perExample });
  }
  const micro: MicroResult[] = [];
  for (const example of job.examples) {
    micro.push(await runMicro(example, files, now, job.micro));
  }
  const auditMicro: AuditMicroResult[] = [];
  for (const example of job.auditExamples) {
    auditMicro.push(await runAuditMicro(example, files, now, job.scratch, job.audit));
  }
  // Last, so that nothing the target loops above measured ran after calls to the phases alone.
  const withPhases: MicroResult[] = [];
  for (const [index, example] of job.examples.entries()) {
    const phases = runPhases(await prepareCase(example), files, now, job.micro);
    withPhases.push({ ...(micro[index] as MicroResult), phases });
  }
  return { micro: withPhases, auditMicro };
}

const [jobFile] = process.argv.slice(2);
if (jobFile === undefined) {
  process.stderr.write('usage: micro-child JOB.json\n');
  process.exit(2);
}
process.stdout.write(`${JSON.stringify(await main(jobFile))}\n`);
