import { readFileSync } from 'node:fs';
import autocannon from 'autocannon';

/**
 * One autocannon load against one loopback URL: a short warm-up (discarded), then the measured run.
 * Each run is bounded three ways: its duration, a cap on the number of requests, and a watchdog that
 * stops it if autocannon itself overruns.
 */
export interface LoadSpec {
  readonly label: string;
  readonly url: string;
  readonly method: 'GET' | 'POST';
  readonly body?: string;
  /**
   * A fresh body for every request (autocannon's setupRequest), for calls the service must not see
   * twice: a repeated hook call's cards are already on record, so its audit write inserts nothing.
   * Built in the bench's own process, so keep it cheap; `body` is still sent by the check calls.
   */
  readonly makeBody?: () => string;
  /**
   * A whole request for every call (path, body, headers), for calls that each need their own signed
   * token; it wins over `body` and `makeBody`. `maxRequests` then bounds each run to what is left of
   * the calls made ahead, so a run never sends a token twice.
   */
  readonly makeRequest?: () => { readonly path: string; readonly body: string; readonly headers: Readonly<Record<string, string>> };
  readonly maxRequests?: () => number;
  /** Requests per second over all connections, sent at an even pace (autocannon `overallRate`). */
  readonly overallRate?: number;
  readonly connections: number;
  readonly durationS: number;
  readonly warmupS: number;
  /**
   * A process whose CPU time (all its threads) to count over the measured run, per answered call:
   * what a call costs the server whatever else shares the cores. Linux only (/proc).
   */
  readonly cpuPid?: number;
}

export interface LoadResult {
  readonly label: string;
  readonly url: string;
  readonly method: 'GET' | 'POST';
  readonly requestBytes: number;
  readonly reqPerSec: number;
  readonly reqPerSecStddev: number;
  readonly latencyMs: { readonly p50: number; readonly p97_5: number; readonly p99: number; readonly max: number };
  readonly completed: number;
  readonly durationS: number;
  /** Non-2xx answers, connection errors and timeouts: the bench fails when any is above zero. */
  readonly non2xx: number;
  readonly errors: number;
  readonly timeouts: number;
  /** Answers by status code, when any was not 2xx (to say which in a problem). */
  readonly statusCodes?: Readonly<Record<string, number>>;
  /** `cpuPid`'s CPU ms over the measured run per answered call; undefined without /proc. */
  readonly serverCpuMsPerCall?: number;
  /** The part of it on `cpuPid`'s main thread (its event loop), per answered call. */
  readonly serverMainThreadCpuMsPerCall?: number;
  /** This process's CPU ms over the measured run per answered call: the load generator's share. */
  readonly clientCpuMsPerCall?: number;
}

/** Far above what one node process on a small machine can answer in a run; a bound, not a target. */
const MAX_REQUESTS_PER_RUN = 1_000_000;
const WATCHDOG_SLACK_S = 15;

function fire(spec: LoadSpec, durationS: number): Promise<autocannon.Result> {
  const makeBody = spec.makeBody ?? ((): string => spec.body ?? '');
  return new Promise((resolve, reject) => {
    const options: autocannon.Options = {
      url: spec.url,
      method: spec.method,
      connections: spec.connections,
      duration: durationS,
      maxOverallRequests: Math.max(1, Math.min(MAX_REQUESTS_PER_RUN, spec.maxRequests?.() ?? MAX_REQUESTS_PER_RUN)),
      ...(spec.overallRate === undefined ? {} : { overallRate: spec.overallRate }),
      timeout: 10,
      ...(spec.body === undefined
        ? {}
        : { body: spec.body, headers: { 'content-type': 'application/json' } }),
      ...(spec.makeBody === undefined
        ? {}
        : {
            headers: { 'content-type': 'application/json' },
            requests: [{ setupRequest: (request: autocannon.Request) => ({ ...request, body: makeBody() }) }],
          }),
      ...(spec.makeRequest === undefined
        ? {}
        : {
            requests: [
              {
                setupRequest: (request: autocannon.Request) => {
                  const made = spec.makeRequest?.();
                  return made === undefined
                    ? request
                    : { ...request, method: 'POST', path: made.path, body: made.body, headers: { 'content-type': 'application/json', ...made.headers } };
                },
              },
            ],
          }),
    };
    const instance = autocannon(options, (error, result) => {
      clearTimeout(watchdog);
      if (error !== null && error !== undefined) {
        reject(error instanceof Error ? error : new Error(String(error)));
        return;
      }
      resolve(result);
    });
    const watchdog = setTimeout(() => instance.stop(), (durationS + WATCHDOG_SLACK_S) * 1000);
  });
}

export async function runLoad(spec: LoadSpec): Promise<LoadResult> {
  if (!['127.0.0.1', 'localhost', '[::1]'].includes(new URL(spec.url).hostname)) {
    throw new Error(`refusing to load ${spec.url}: the bench loads loopback addresses only`);
  }
  if (spec.warmupS > 0) {
    await fire(spec, spec.warmupS);
  }
  const serverBefore = spec.cpuPid === undefined ? undefined : serverCpuMs(spec.cpuPid);
  const clientCpuBefore = process.cpuUsage();
  const result = await fire(spec, spec.durationS);
  const clientCpu = process.cpuUsage(clientCpuBefore);
  const serverAfter = spec.cpuPid === undefined ? undefined : serverCpuMs(spec.cpuPid);
  // Every answer cost the server its work, a refusal too (if less): CPU is shared over all of them.
  const answered = result['2xx'] + result.non2xx;
  const perCall = (before: number | undefined, after: number | undefined): number | undefined =>
    before === undefined || after === undefined || answered === 0 ? undefined : (after - before) / answered;
  const serverCpuMsPerCall = perCall(serverBefore?.all, serverAfter?.all);
  const serverMainThreadCpuMsPerCall = perCall(serverBefore?.mainThread, serverAfter?.mainThread);
  const clientCpuMsPerCall = perCall(0, (clientCpu.user + clientCpu.system) / 1000);
  return {
    label: spec.label,
    url: spec.url,
    method: spec.method,
    requestBytes: spec.body === undefined ? 0 : Buffer.byteLength(spec.body),
    reqPerSec: result.requests.average,
    reqPerSecStddev: result.requests.stddev,
    latencyMs: {
      p50: result.latency.p50,
      p97_5: result.latency.p97_5,
      p99: result.latency.p99,
      max: result.latency.max,
    },
    completed: result['2xx'],
    durationS: result.duration,
    non2xx: result.non2xx,
    errors: result.errors,
    timeouts: result.timeouts,
    ...(result.non2xx > 0
      ? { statusCodes: Object.fromEntries(Object.entries(result.statusCodeStats ?? {}).map(([code, stat]) => [code, stat.count ?? 0])) }
      : {}),
    ...(serverCpuMsPerCall === undefined ? {} : { serverCpuMsPerCall }),
    ...(serverMainThreadCpuMsPerCall === undefined ? {} : { serverMainThreadCpuMsPerCall }),
    ...(clientCpuMsPerCall === undefined ? {} : { clientCpuMsPerCall }),
  };
}

/**
 * /proc reports a process's CPU time in clock ticks of sysconf(_SC_CLK_TCK) (proc(5)), which is
 * USER_HZ, 100 a second, on Linux's mainstream architectures.
 */
const TICKS_PER_SECOND = 100;

/** A live process's CPU time so far, user + system over all its threads (proc(5), /proc/PID/stat). */
export function processCpuMs(pid: number): number | undefined {
  return statCpuMs(`/proc/${pid}/stat`);
}

/** The same for its main thread alone, which runs node's event loop (/proc/PID/task/PID/stat). */
export function mainThreadCpuMs(pid: number): number | undefined {
  return statCpuMs(`/proc/${pid}/task/${pid}/stat`);
}

function statCpuMs(path: string): number | undefined {
  try {
    return cpuMsFromStat(readFileSync(path, 'utf8'));
  } catch {
    return undefined;
  }
}

const serverCpuMs = (pid: number): { all: number | undefined; mainThread: number | undefined } => ({
  all: processCpuMs(pid),
  mainThread: mainThreadCpuMs(pid),
});

/** Fields 14 and 15 (utime, stime) of a /proc/PID/stat line; the name in field 2 may hold spaces. */
export function cpuMsFromStat(stat: string): number | undefined {
  const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
  // After the name, the line goes on at field 3 (state): utime is field 14, so index 11 here.
  const utime = Number(fields[11]);
  const stime = Number(fields[12]);
  return Number.isFinite(utime) && Number.isFinite(stime) ? ((utime + stime) * 1000) / TICKS_PER_SECOND : undefined;
}

/** Problems that make a load result unusable as a measurement. */
export function loadProblems(result: LoadResult): string[] {
  const problems: string[] = [];
  if (result.non2xx > 0) {
    const codes = Object.entries(result.statusCodes ?? {})
      .map(([code, count]) => `${count} × ${code}`)
      .join(', ');
    problems.push(`${result.label}: ${result.non2xx} non-2xx answers${codes === '' ? '' : ` (${codes})`}`);
  }
  if (result.errors > 0 || result.timeouts > 0) {
    problems.push(`${result.label}: ${result.errors} errors, ${result.timeouts} timeouts`);
  }
  if (result.completed === 0) {
    problems.push(`${result.label}: no request completed`);
  }
  return problems;
}
