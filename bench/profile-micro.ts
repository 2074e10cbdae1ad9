import { readFileSync } from 'node:fs';
import { performance } from 'node:perf_hooks';
import type { HookExample } from './cases.js';
import { loadBundledFiles, runWholePath } from './micro.js';

/**
 * Child entry for the CPU profile: after a short warm-up, runs the whole pure path (parse, validate,
 * gather, evaluate, serialise) on one retimed example until a time or iteration cap, then exits so that
 * `node --cpu-prof` writes its profile. The bench starts it; it is not meant to be run by hand.
 *
 *   node --cpu-prof --cpu-prof-dir=DIR BUILD/bench/profile-micro.js EXAMPLE.json SECONDS
 *
 * BUILD is the bench's private build (`--runner dist`: the service's code as tsc emits it, by plain
 * node); under `--runner tsx`, and by hand, `node --cpu-prof ... --import tsx bench/profile-micro.ts`.
 */

const [exampleFile, secondsText] = process.argv.slice(2);
const seconds = Number(secondsText);
if (exampleFile === undefined || !Number.isFinite(seconds) || seconds <= 0 || seconds > 60) {
  process.stderr.write('usage: profile-micro.ts EXAMPLE.json SECONDS (at most 60)\n');
  process.exit(2);
}
const MAX_ITERATIONS = 200_000;

const example = JSON.parse(readFileSync(exampleFile, 'utf8')) as HookExample;
const files = await loadBundledFiles();
const now = new Date();

/** The profile is read from the first sample inside this function: loading and warm-up stay out. */
async function profiledLoop(stopAt: number): Promise<{ iterations: number; sink: number }> {
  let sink = 0;
  let iterations = 0;
  while (iterations < MAX_ITERATIONS && performance.now() < stopAt) {
    sink += await runWholePath(example, files, now);
    iterations += 1;
  }
  return { iterations, sink };
}

const warmupEnd = performance.now() + Math.min(1, seconds / 4) * 1000;
for (let i = 0; i < MAX_ITERATIONS && performance.now() < warmupEnd; i += 1) {
  await runWholePath(example, files, now);
}
const result = await profiledLoop(performance.now() + seconds * 1000);
process.stdout.write(`${JSON.stringify(result)}\n`);
