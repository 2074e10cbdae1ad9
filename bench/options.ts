import { parseArgs } from 'node:util';
import { ENV_DEFAULTS } from '../src/config/env-config.js';
import type { ServiceRunner } from './service-process.js';

export interface BenchOptions {
  readonly writeDoc: boolean;
  /** Keep this run's issue-9 figures as the "before" column (bench/before-issue-9.json). */
  readonly writeBefore: boolean;
  readonly runner: ServiceRunner;
  readonly allExamples: boolean;
  readonly profile: boolean;
  readonly connections: number;
  readonly durationS: number;
  readonly warmupS: number;
  readonly microIterations: number;
  readonly profileS: number;
  /** Seconds of throwaway load on each process before the first measurement (JIT, caches). */
  readonly primeS: number;
  /**
   * Throwaway signed calls sent to each process (the service and the token baseline alike) before the
   * issue-9 HTTP loads: a count, not a time, so both sides are primed by the same calls. V8 was still
   * optimising the service's code some 750 calls into a load, hence thousands.
   */
  readonly primeCalls: number;
  /** Throwaway calls of the pure path over all examples in the micro-benchmark's process before its loops. */
  readonly microPrimeCalls: number;
  /** Orders in the smaller bulk export (the larger has LARGE_FACTOR times as many). */
  readonly bulkOrders: number;
  /** Rounds of read-and-parse against simulate at the smaller size. */
  readonly bulkRounds: number;
  /** Fresh starts of the service per cold-start figure. */
  readonly coldStarts: number;
}

export const BENCH_USAGE = `Usage: npm run bench [-- OPTIONS]
  --write-doc        rewrite docs/performance.md from this run
  --write-before     keep this run's issue-9 target figures in bench/before-issue-9.json
  --quick            short runs to check the bench works (figures not for the doc)
  --runner dist|tsx  dist (default): build as npm start does; tsx: run src/server.ts through tsx
  --all-examples     load every order-sign example, not only the chosen few
  --no-profile       skip the CPU profiles
  --connections N    autocannon connections (default 10, at most the service's OXYGEN_CHECKER_MAX_CONCURRENT)
  --duration S       measured seconds per case (default 8)
  --warmup S         warm-up seconds per case (default 2)
  --iterations N     micro-benchmark iterations per loop per example (default 2000)`;

function wholeNumber(text: string | undefined, fallback: number, min: number, max: number, name: string): number {
  if (text === undefined) {
    return fallback;
  }
  const value = Number(text);
  if (!Number.isInteger(value) || value < min || value > max) {
    throw new Error(`--${name}: must be a whole number from ${min} to ${max}`);
  }
  return value;
}

/** Returns the options, or `undefined` when help was asked for. Throws on a usage error. */
export function parseBenchOptions(args: readonly string[]): BenchOptions | undefined {
  const { values } = parseArgs({
    args: [...args],
    strict: true,
    allowPositionals: false,
    options: {
      'write-doc': { type: 'boolean', default: false },
      'write-before': { type: 'boolean', default: false },
      quick: { type: 'boolean', default: false },
      runner: { type: 'string' },
      'all-examples': { type: 'boolean', default: false },
      'no-profile': { type: 'boolean', default: false },
      connections: { type: 'string' },
      duration: { type: 'string' },
      warmup: { type: 'string' },
      iterations: { type: 'string' },
      help: { type: 'boolean', short: 'h', default: false },
    },
  });
  if (values.help === true) {
    return undefined;
  }
  const runner = values.runner ?? 'dist';
  if (runner !== 'dist' && runner !== 'tsx') {
    throw new Error('--runner: must be dist or tsx');
  }
  const quick = values.quick === true;
  if (quick && values['write-doc'] === true) {
    throw new Error('--quick figures are too short for docs/performance.md; drop one of the two');
  }
  if (quick && values['write-before'] === true) {
    throw new Error('--quick figures are too short to keep as before figures; drop one of the two');
  }
  return {
    writeDoc: values['write-doc'] === true,
    writeBefore: values['write-before'] === true,
    runner,
    allExamples: values['all-examples'] === true,
    profile: values['no-profile'] !== true,
    // More connections than the service's overload cap would measure its 503s, not its work.
    connections: wholeNumber(values.connections, 10, 1, ENV_DEFAULTS.OXYGEN_CHECKER_MAX_CONCURRENT, 'connections'),
    durationS: wholeNumber(values.duration, quick ? 2 : 8, 1, 60, 'duration'),
    warmupS: wholeNumber(values.warmup, quick ? 1 : 2, 0, 30, 'warmup'),
    microIterations: wholeNumber(values.iterations, quick ? 200 : 2000, 10, 100_000, 'iterations'),
    profileS: quick ? 2 : 5,
    primeS: quick ? 1 : 3,
    primeCalls: quick ? 300 : 5000,
    microPrimeCalls: quick ? 400 : 5000,
    bulkOrders: quick ? 20 : 300,
    bulkRounds: quick ? 1 : 2,
    coldStarts: quick ? 1 : 3,
  };
}
