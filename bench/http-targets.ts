import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { freshHookInstances } from './audit-cases.js';
import {
  BENCH_ISSUER,
  BENCH_PUBLIC_URL,
  createBenchClient,
  signCalls,
  writeTrustFile,
  type BenchClient,
  type CallSource,
  type SignedCall,
} from './bench-client.js';
import type { HookExample } from './cases.js';
import type { ChildServer } from './child-server.js';
import type { HttpContext } from './http-cases.js';
import { loadProblems, runLoad, type LoadResult, type LoadSpec } from './load-test.js';
import { startProductionService, startTokenBaseline } from './service-process.js';
import type { TokenBaselineConfig } from './token-baseline-server.js';
import { ENV_DEFAULTS } from '../src/config/env-config.js';

/**
 * Issue 9's HTTP figures, in one run: the service in production mode (a valid ES384 token on every
 * call, audit writes on, a fresh hookInstance per call) against the bare express + same-token
 * baseline (bench/token-baseline-server.ts), side by side:
 * - throughput on the examples mix (every chosen example in turn) and on the 70 KB request;
 * - latency at half the service's saturating rate (its throughput on the mix), sent at an even pace
 *   to both.
 */

export interface HttpPair {
  readonly label: string;
  readonly requestBytes: number;
  readonly service: LoadResult;
  readonly baseline: LoadResult;
}

export interface HttpTargetMeasurements {
  readonly mix: HttpPair;
  readonly large: HttpPair;
  /** The even-paced rate sent to both, requests per second. */
  readonly halfRate: number;
  readonly halfRatePair: HttpPair;
  /** The examples in the mix. */
  readonly mixExamples: readonly string[];
  /**
   * The service process's peak resident memory over the whole run (VmHWM, kB), for sizing a
   * container's memory; undefined where /proc is not there to read it.
   */
  readonly servicePeakRssKb?: number;
  readonly problems: readonly string[];
}

/** A bound on each priming load, which ends when its calls are used up (a few seconds to a minute). */
const PRIME_CAP_S = 180;

export interface HttpTargetContext extends HttpContext {
  readonly mixExamples: readonly HookExample[];
  readonly large: HookExample;
}

/** The call's answer, from the service, checked: 200 with a cards list. */
export async function sendSigned(baseUrl: string, call: SignedCall): Promise<{ status: number; text: string }> {
  const response = await fetch(`${baseUrl}${call.path}`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', authorization: call.authorization, 'x-bench-case': call.caseName },
    body: call.body,
    signal: AbortSignal.timeout(10_000),
  });
  return { status: response.status, text: await response.text() };
}

/**
 * A maker over calls signed ahead: `cycle` for the baseline (it keeps no replay cache), once for the
 * service. `reserve` calls are held back from each run's bound, for requests autocannon has in flight
 * when it reaches it, so no token is ever sent twice.
 */
export function callFeed(calls: readonly SignedCall[], cycle: boolean, reserve = 0) {
  let next = 0;
  return {
    makeRequest: () => {
      const call = calls[cycle ? next % calls.length : Math.min(next, calls.length - 1)] as SignedCall;
      next += 1;
      return { path: call.path, body: call.body, headers: { authorization: call.authorization, 'x-bench-case': call.caseName } };
    },
    maxRequests: () => (cycle ? Number.MAX_SAFE_INTEGER : Math.max(1, calls.length - next - reserve)),
    used: () => next,
  };
}

export function sourcesOf(examples: readonly HookExample[]): CallSource[] {
  return examples.map((example) => ({
    serviceId: example.serviceId,
    caseName: example.name,
    makeBody: freshHookInstances(example.body),
  }));
}

export async function measureHttpTargets(ctx: HttpTargetContext): Promise<HttpTargetMeasurements> {
  const { options, progress } = ctx;
  const client: BenchClient = createBenchClient();
  const trustFile = join(ctx.scratch, 'bench-trust.json');
  writeTrustFile(client, trustFile);
  const mixSources = sourcesOf(ctx.mixExamples);
  const largeSources = sourcesOf([ctx.large]);
  progress('starting the service in production mode with the bench client in its trust file');
  const service = await startProductionService(ctx.root, ctx.built, trustFile, BENCH_PUBLIC_URL);
  let baseline: ChildServer | undefined;
  try {
    // The service's own answer to each case, which the baseline then gives byte for byte.
    const answers: Record<string, string> = {};
    for (const call of signCalls(client, [...mixSources, ...largeSources], mixSources.length + 1)) {
      const answer = await sendSigned(service.url, call);
      if (answer.status !== 200 || !Array.isArray((JSON.parse(answer.text) as { cards?: unknown }).cards)) {
        throw new Error(`${call.caseName} in production mode answered ${answer.status}: ${answer.text.slice(0, 600)}`);
      }
      answers[call.caseName] = answer.text;
    }
    const config: TokenBaselineConfig = {
      issuer: BENCH_ISSUER,
      publicUrl: BENCH_PUBLIC_URL,
      publicJwk: client.publicJwk,
      bodyLimitBytes: ENV_DEFAULTS.OXYGEN_CHECKER_BODY_LIMIT_BYTES,
      answers,
    };
    const configFile = join(ctx.scratch, 'token-baseline.json');
    writeFileSync(configFile, JSON.stringify(config));
    baseline = await startTokenBaseline(ctx.root, configFile, ctx.built);
    for (const call of signCalls(client, [...mixSources, ...largeSources], mixSources.length + 1)) {
      const answer = await sendSigned(baseline.url, call);
      if (answer.status !== 200 || Buffer.byteLength(answer.text) !== Buffer.byteLength(answers[call.caseName] ?? '')) {
        throw new Error(`the baseline answered ${call.caseName} with ${answer.status} and not the service's bytes`);
      }
    }

    const seconds = options.warmupS + options.durationS;
    const load = (label: string, url: string, calls: readonly SignedCall[], cycle: boolean, overallRate?: number, cpuPid?: number): LoadSpec => ({
      label,
      url,
      ...(cpuPid === undefined ? {} : { cpuPid }),
      method: 'POST',
      ...callFeed(calls, cycle, options.connections),
      ...(overallRate === undefined ? {} : { overallRate }),
      connections: options.connections,
      durationS: options.durationS,
      warmupS: options.warmupS,
    });
    const measure = async (spec: LoadSpec): Promise<LoadResult> => {
      const result = await runLoad(spec);
      progress(`${spec.label}: ${Math.round(result.reqPerSec)} req/s, p99 ${result.latencyMs.p99} ms`);
      return result;
    };

    progress(`priming the production service and the baseline: ${options.primeCalls} calls each (the mix and the large request)`);
    // The same calls to each side, each token once, counted rather than timed: a timed prime gives the
    // faster side more calls, and the service was still being optimised well into a short one.
    const primeCalls = signCalls(client, [...mixSources, ...largeSources], options.primeCalls + options.connections);
    const primeCap = { durationS: PRIME_CAP_S, warmupS: 0 };
    const prime = await runLoad({ ...load('prime', service.url, primeCalls, false), ...primeCap });
    const baselinePrime = await runLoad({ ...load('prime', baseline.url, primeCalls, false), ...primeCap });
    progress(`primed: the service answered ${prime.completed} calls, the baseline ${baselinePrime.completed}`);
    // Tokens for a load are signed before it: enough for the service at well above its priming rate.
    const poolFor = (rate: number): number => Math.ceil(Math.max(rate, 50) * seconds * 2) + 4 * options.connections;

    const pair = async (label: string, sources: readonly CallSource[], rate: number, serviceFirst: boolean, overallRate?: number): Promise<HttpPair> => {
      progress(`signing tokens for ${label}`);
      const calls = signCalls(client, sources, overallRate === undefined ? poolFor(rate) : Math.ceil(overallRate * seconds * 1.1) + 4 * options.connections);
      const runService = (): Promise<LoadResult> => measure(load(`${label} (service)`, service.url, calls, false, overallRate, service.pid));
      const runBaseline = (): Promise<LoadResult> =>
        measure(load(`${label} (baseline)`, baseline?.url ?? '', calls, true, overallRate, baseline?.pid));
      const first = serviceFirst ? await runService() : await runBaseline();
      const second = serviceFirst ? await runBaseline() : await runService();
      const requestBytes = Math.round(calls.reduce((sum, call) => sum + Buffer.byteLength(call.body), 0) / calls.length);
      return { label, requestBytes, service: serviceFirst ? first : second, baseline: serviceFirst ? second : first };
    };

    const mix = await pair(`examples mix (${ctx.mixExamples.length} examples in turn)`, mixSources, prime.reqPerSec, true);
    const large = await pair(`${ctx.large.name} (${Math.round(ctx.large.requestBytes / 1024)} KB)`, largeSources, prime.reqPerSec, false);
    // Half the service's saturating rate on the mix, as a whole number of calls a second.
    const halfRate = Math.max(1, Math.floor(mix.service.reqPerSec / 2));
    const halfRatePair = await pair(`examples mix at ${halfRate} req/s, even pace`, mixSources, halfRate, true, halfRate);

    // The baseline must answer every call (anything else is the bench's fault); a call the service
    // refuses under load is a finding about the service, kept in its figure (targets.ts), not a fault.
    const problems = [mix, large, halfRatePair].flatMap((p) => [
      ...loadProblems(p.service).filter((problem) => !problem.includes('non-2xx') && !(p.service.non2xx > 0 && problem.includes('no request completed'))),
      ...loadProblems(p.baseline),
    ]);
    for (const p of [mix, large, halfRatePair]) {
      if (p.service.non2xx > 0) {
        progress(`${p.label}: the service answered ${p.service.non2xx} calls with other than 2xx; counted against its figure`);
      }
    }
    const servicePeakRssKb = peakRssKb(service.pid);
    return {
      mix,
      large,
      halfRate,
      halfRatePair,
      mixExamples: ctx.mixExamples.map((e) => e.name),
      ...(servicePeakRssKb === undefined ? {} : { servicePeakRssKb }),
      problems,
    };
  } finally {
    await baseline?.stop();
    await service.stop();
    progress('stopped the production service and the baseline');
  }
}

/** A live process's peak resident set (VmHWM in /proc/PID/status, kB); undefined off Linux. */
export function peakRssKb(pid: number): number | undefined {
  try {
    const match = /^VmHWM:\s+(\d+) kB$/m.exec(readFileSync(`/proc/${pid}/status`, 'utf8'));
    return match === null ? undefined : Number(match[1]);
  } catch {
    return undefined;
  }
}
