import { existsSync, readFileSync } from 'node:fs';
import { bulkSplit, steadyState, type BulkMeasurements, type SteadyState } from './bulk-cases.js';
import type { BulkChildResult } from './bulk-child.js';
import type { MicroResult } from './micro.js';
import { markdownTable, phaseFindings, ratio, whole, type TargetsReport } from './report.js';
import { TARGETS, answeredPerSecond, formatLimit, formatValue, judge, judgeAll, targetLimit, type BeforeFigures, type TargetFigure } from './targets.js';

/**
 * The issue-9 section of docs/performance.md: every target with its limit, the "before" figure kept
 * from one full run on the code before the speed work (bench/before-issue-9.json), this run's figure
 * and its verdict, then how each was measured and the figures behind it.
 */

export const BEFORE_FILE = 'bench/before-issue-9.json';

function isFigure(value: unknown): value is TargetFigure {
  const v = value as Partial<TargetFigure> | null;
  return typeof v?.id === 'string' && typeof v.value === 'number' && typeof v.basis === 'string';
}

/** The before figures, or undefined when the file is missing or not in the expected shape. */
export function parseBeforeFigures(text: string): BeforeFigures | undefined {
  const raw = JSON.parse(text) as Partial<BeforeFigures> | null;
  if (typeof raw?.commit !== 'string' || typeof raw.date !== 'string' || !Array.isArray(raw.figures) || !raw.figures.every(isFigure)) {
    return undefined;
  }
  return { commit: raw.commit, date: raw.date, note: typeof raw.note === 'string' ? raw.note : '', figures: raw.figures };
}

export function loadBeforeFigures(path: string): BeforeFigures | undefined {
  return existsSync(path) ? parseBeforeFigures(readFileSync(path, 'utf8')) : undefined;
}

export function targetsTable(targets: TargetsReport | undefined, before: BeforeFigures | undefined): string {
  const judged = judgeAll(targets?.figures ?? []);
  const beforeHeader = before === undefined ? 'before' : `before (${before.commit}, ${before.date.slice(0, 10)})`;
  return markdownTable(
    ['target', 'limit', beforeHeader, 'this run', 'verdict', 'from'],
    judged.map((t) => {
      const was = before?.figures.find((f) => f.id === t.id)?.value;
      const wasText = was === undefined ? '–' : `${formatValue(t, was)} ${judge(t, was)}`;
      return [t.title, formatLimit(t), wasText, formatValue(t, t.value), t.verdict === 'not measured' ? 'not measured' : `**${t.verdict}**`, t.basis];
    }),
  );
}

function httpTable(targets: TargetsReport): string {
  const http = targets.http;
  if (http === undefined) {
    return 'Not measured in this run.';
  }
  const cpu = (ms: number | undefined): string => (ms === undefined ? '–' : ms.toFixed(2));
  return markdownTable(
    [
      'case',
      'request B (mean)',
      'service 2xx/s',
      'baseline 2xx/s',
      'service × baseline',
      'service not 2xx',
      'p50 ms service / baseline',
      'p99 ms service / baseline',
      'CPU ms a call: service (its event loop) / baseline / load generator',
    ],
    [http.mix, http.large, http.halfRatePair].map((pair) => [
      pair.label,
      whole(pair.requestBytes),
      whole(answeredPerSecond(pair.service)),
      whole(answeredPerSecond(pair.baseline)),
      `${(answeredPerSecond(pair.service) / answeredPerSecond(pair.baseline)).toFixed(2)} ×`,
      whole(pair.service.non2xx),
      `${pair.service.latencyMs.p50} / ${pair.baseline.latencyMs.p50}`,
      `${pair.service.latencyMs.p99} / ${pair.baseline.latencyMs.p99}`,
      `${cpu(pair.service.serverCpuMsPerCall)} (${cpu(pair.service.serverMainThreadCpuMsPerCall)}) / ${cpu(pair.baseline.serverCpuMsPerCall)} / ${cpu(pair.service.clientCpuMsPerCall)}`,
    ]),
  );
}

/**
 * What the throughput target asks of the CPU, from the mix's figures: the service at the target's
 * multiple of the baseline's rate, with the load generator sending it, needs this many cores' worth of CPU time. On a
 * machine with fewer cores than that, no change short of cheaper calls can meet the target.
 */
export function throughputCpuLine(targets: TargetsReport): string | undefined {
  const mix = targets.http?.mix;
  const service = mix?.service.serverCpuMsPerCall;
  const client = mix?.service.clientCpuMsPerCall;
  if (mix === undefined || service === undefined || client === undefined) {
    return undefined;
  }
  const baseline = mix.baseline.serverCpuMsPerCall;
  const eventLoop = mix.service.serverMainThreadCpuMsPerCall;
  const limit = targetLimit('http-mix-throughput');
  const rate = limit * answeredPerSecond(mix.baseline);
  const cores = (rate * (service + client)) / 1000;
  return (
    `On the mix a call cost the service ${service.toFixed(2)} ms of CPU over all its threads` +
    `${eventLoop === undefined ? '' : ` (${eventLoop.toFixed(2)} ms on its event loop; the rest on the thread pool's signature checks, the store's worker thread and V8's helper threads)`}` +
    `${baseline === undefined ? '' : `, against the baseline's ${baseline.toFixed(2)} ms`}, ` +
    `and the load generator spent ${client.toFixed(2)} ms sending it. ${limit} × the baseline's rate is ${whole(rate)} calls a second, ` +
    `which at these costs needs ${cores.toFixed(2)} cores' worth of CPU for the service and the load generator together.`
  );
}

/** The service's peak memory over the loads above, the figure docs/deployment.md sizes pods from. */
function memoryLine(targets: TargetsReport): string {
  const kb = targets.http?.servicePeakRssKb;
  return kb === undefined
    ? 'The service\'s peak memory was not measured in this run.'
    : `The service process's peak resident memory over all the loads above (VmHWM): ${whole(kb / 1024)} MB.`;
}

function bulkTable(targets: TargetsReport): string {
  const bulk = targets.bulk;
  if (bulk === undefined) {
    return 'Not measured in this run.';
  }
  const row = (label: string, r: typeof bulk.read): string[] => [
    label,
    whole(r.lines),
    whole(r.bytes / 1024),
    whole(r.ms),
    whole(r.lines / (r.ms / 1000)),
    whole(r.maxRssKb / 1024),
  ];
  return markdownTable(
    ['process', 'NDJSON lines', 'KB', 'ms', 'lines/s', 'peak RSS MB'],
    [
      row(`read and JSON.parse every line, ${bulk.smallOrders} orders`, bulk.read),
      row(`simulate (index, then replay under two policies), ${bulk.smallOrders} orders`, bulk.simulate),
      ...(bulk.readLarge === undefined ? [] : [row(`read and JSON.parse every line, ${bulk.largeOrders} orders (one turn)`, bulk.readLarge)]),
      row(`simulate, ${bulk.largeOrders} orders`, bulk.simulateLarge),
    ],
  );
}

/** "75 orders each" for equal blocks, "300, 300, 300, 100 orders" otherwise. */
function blockSizes(r: BulkChildResult): string {
  const sizes = (r.replayBlocks ?? []).map((b) => b.orders);
  return new Set(sizes).size === 1 ? `${whole(sizes[0] ?? 0)} orders each` : `${sizes.map(whole).join(', ')} orders`;
}

function splitRow(label: string, r: BulkChildResult, read: BulkChildResult | undefined): string[] {
  const split = read === undefined ? undefined : bulkSplit(r, read);
  if (split === undefined) {
    return [label, '–', '–', '–'];
  }
  return [
    label,
    `${whole(split.indexMs)} ms, ${ratio(split.indexTimesFloor)}`,
    `${whole(split.replayMs)} ms, ${ratio(split.replayTimesFloor)}`,
    `${split.blocks.map((b) => whole(b.ms)).join(', ')} (${blockSizes(r)})`,
  ];
}

/** Issue 9's bulk limit: simulate's throughput at least this × the read-and-parse loop's. */
const bulkLimit = (): number => targetLimit('bulk-throughput');

/** One plain sentence on the larger export's first block against its last, from this run's figures. */
function warmUpSentence(bulk: BulkMeasurements, steady: SteadyState): string {
  const { first, last, firstOverLast } = steady;
  const pace = (b: typeof first): string => `${(b.ms / b.orders).toFixed(2)} ms an order`;
  const which = `The last ${whole(last.orders)} orders of the ${whole(bulk.largeOrders)}-order run replayed`;
  const against = `the first ${whole(first.orders)} (${pace(last)} against ${pace(first)})`;
  // 1.2: closer than that, two blocks of a few hundred ms on a shared machine are not told apart.
  if (firstOverLast >= 1.2) {
    return `${which} ${ratio(firstOverLast)} faster than ${against}: the first ones run before V8 has optimised the replay's functions, which it does only after they have run many times, so a short export pays that warm-up in full.`;
  }
  if (firstOverLast <= 1 / 1.2) {
    return `${which} ${ratio(1 / firstOverLast)} slower than ${against}: warm-up does not explain that; other work on the machine may.`;
  }
  return `${which} at about the pace of ${against}: no warm-up shows in this run.`;
}

function steadyStateSentence(bulk: BulkMeasurements, steady: SteadyState): string {
  const sum = steady.indexTimesFloor + steady.lastPaceReplayTimesFloor;
  return (
    `An estimate, not a measurement: on an export large enough for the warm-up not to count, simulate would take` +
    ` the index build's ${ratio(steady.indexTimesFloor)} the loop's time (as in the ${whole(bulk.largeOrders)}-order run)` +
    ` plus the replay at its last block's pace, ${ratio(steady.lastPaceReplayTimesFloor)}: ${ratio(sum)} in all` +
    ` (the loop's own time per line taken as at ${whole(bulk.largeOrders)} orders),` +
    ` a throughput of about ${steady.estimatedRatio.toFixed(2)} × the loop's (the target, ${bulkLimit()} ×, needs ${(1 / bulkLimit()).toFixed(2)} × or less in all).` +
    // Part of the last block may still run before V8 has optimised the engine, so the estimate can
    // lean low; the index build's share does not depend on the replay at all, hence the bound.
    ` If the last block was itself still warming up, the figure would be somewhat higher; but even a replay that cost` +
    ` nothing would leave the index build's ${ratio(steady.indexTimesFloor)}, at most ${(1 / steady.indexTimesFloor).toFixed(2)} × the loop's throughput.`
  );
}

/**
 * Where simulate's time goes: its index build and its replay each against the floor, and the larger
 * export's replay block by block, so the bulk target's arithmetic can be checked part by part.
 */
function bulkSplitPart(targets: TargetsReport): string {
  const bulk = targets.bulk;
  if (bulk === undefined) {
    return '';
  }
  if (bulkSplit(bulk.simulate, bulk.read) === undefined) {
    return 'Simulate\'s time was not split into index build and replay in this run.';
  }
  const table = markdownTable(
    ['simulate', 'index build (read, parse, insert into SQLite): ms, × loop', 'replay under two policies: ms, × loop', 'replay of each block of orders in turn, ms'],
    [
      splitRow(`${whole(bulk.smallOrders)} orders (the run above)`, bulk.simulate, bulk.read),
      splitRow(`${whole(bulk.largeOrders)} orders`, bulk.simulateLarge, bulk.readLarge),
    ],
  );
  const reading =
    '"× loop" is the part\'s time over the read-and-parse loop\'s time over the same export (for the larger export,' +
    ' the loop\'s one turn just before it: the loop warms up too, so each size has a floor of its own). The parts add up to' +
    ` simulate's time over the loop's, the inverse of the throughput ratio, so the target needs them to add up to ${1 / bulkLimit()} × or less.` +
    ' The replay asks V8 for a full garbage collection once indexing is done and every 250 orders (src/bulk/simulate.ts,' +
    ' to keep its memory flat); each block carries those that fell in it, the first block the one after indexing too.';
  const steady = bulk.readLarge === undefined ? undefined : steadyState(bulk.simulateLarge, bulk.readLarge);
  const sentences = steady === undefined ? [] : [warmUpSentence(bulk, steady), steadyStateSentence(bulk, steady)];
  return [table, reading, ...sentences].join('\n\n');
}

function coldTable(targets: TargetsReport): string {
  const cold = targets.coldStart;
  if (cold === undefined) {
    return 'Not measured in this run.';
  }
  const ms = (values: readonly number[]): string => values.map((v) => whole(v)).join(', ');
  return markdownTable(
    ['first 200 on', 'ms from spawn, each start'],
    [
      ['GET /healthz', ms(cold.healthzMs)],
      ['a signed hook call', ms(cold.hookMs)],
    ],
  );
}

/** What the summary of failing targets reads besides the targets' own figures. */
export interface RunContext {
  /** The pure pipeline's results, for the phase split (bench/micro.ts). */
  readonly micro?: readonly MicroResult[];
  /** The machine's cores, to set the CPU the throughput target needs against. */
  readonly cpus?: number;
}

/**
 * For each target this run failed, one line on what meeting it would take, from this run's figures:
 * the arithmetic behind the verdicts, set out where the reader meets them. The details sit under
 * each target's own table further down.
 */
export function failingTargetsSummary(targets: TargetsReport | undefined, run: RunContext): string[] {
  const failed = new Set(judgeAll(targets?.figures ?? []).filter((t) => t.verdict === 'FAIL').map((t) => t.id));
  const lines: string[] = [];
  const cpu = targets === undefined ? undefined : throughputCpuLine(targets);
  if ((failed.has('http-mix-throughput') || failed.has('http-large-throughput')) && cpu !== undefined) {
    const cores = run.cpus === undefined ? '' : ` This machine has ${run.cpus} cores in all.`;
    lines.push(`**Throughput.** ${cpu}${cores}`);
  }
  if ((failed.has('engine-examples') || failed.has('engine-large')) && run.micro !== undefined && run.micro.some((m) => m.phases !== undefined)) {
    lines.push(`**Engine.** ${phaseFindings(run.micro).join(' ')} (Where an evaluation's time goes, below.)`);
  }
  const bulk = targets?.bulk;
  const split = bulk === undefined ? undefined : bulkSplit(bulk.simulate, bulk.read);
  if (failed.has('bulk-throughput') && split !== undefined) {
    lines.push(
      `**Bulk.** Building the export's index alone (read, parse, insert into SQLite, so that memory stays flat) took ` +
        `${ratio(split.indexTimesFloor)} the read-and-parse loop's time, and the replay ${ratio(split.replayTimesFloor)}; ` +
        `the target needs the two to add up to ${1 / bulkLimit()} × or less, and even a replay that cost nothing would leave at most ` +
        `${(1 / split.indexTimesFloor).toFixed(2)} × the loop's throughput.`,
    );
  }
  return lines;
}

export function renderTargetsSection(targets: TargetsReport | undefined, before: BeforeFigures | undefined, run: RunContext = {}): string {
  const summary = failingTargetsSummary(targets, run);
  const summaryText =
    summary.length === 0 ? '' : `\n\nWhat the targets this run failed would take, from its own figures:\n\n${summary.map((line) => `- ${line}`).join('\n')}`;
  const beforeText =
    before === undefined
      ? `No before figures were found (\`${BEFORE_FILE}\`).`
      : `"Before" is one full run on commit ${before.commit} (${before.date}), kept in \`${BEFORE_FILE}\`${before.note === '' ? '' : `: ${before.note}`}.`;
  return `## Issue 9 targets

Each target is a ratio measured side by side in one run (or, for cold start, a time), so a busy
machine falls on both sides of it. The bench prints each with PASS or FAIL. ${beforeText}

${targetsTable(targets, before)}${summaryText}

- **Hook throughput.** The service in production mode (\`node dist/server.js\`, a trust file naming the
  bench's own client with an ES384 key pair made at bench start, a valid token with its own \`jti\` on
  every call, the audit trail on as shipped, a fresh hookInstance on every call so every audit write
  inserts its cards) against \`bench/token-baseline-server.ts\`: a bare express 5 app in its own
  process that parses the same body, verifies the same token with jsonwebtoken (signature, issuer,
  audience, expiry; its KeyObject built once) and answers with the service's own answer to that case,
  byte for byte. The two check the same signature in different places: the service with node:crypto's
  asynchronous \`verify\`, on libuv's thread pool (docs/security.md, "The signature check runs off the
  event loop"), the baseline with jsonwebtoken's synchronous check on its event loop, as issue 9 defines
  it. On these 2 cores, shared with the load generator, the service can therefore spend part of the
  second core on signatures while its event loop serves other calls; the baseline cannot.
  The tokens are signed before each load, never during it; the baseline keeps no replay
  cache, so it is sent the same tokens in turn. The examples mix sends every chosen example in turn; the
  70 KB request is \`bench/large-request.ts\`: an invented Larkspur Bay patient's order-sign call with
  200 SpO2, respiratory-rate and blood gas observations. Loads take turns (service first, then baseline
  first). The bench raises the replay cache's per-client share so a whole run's tokens fit. Throughput
  counts calls answered 2xx; a call the service refuses (503 when overloaded or its store is slow) is
  no throughput, and any refusal fails the target it happened in, with the count beside it.
- **CPU a call.** Each process's CPU time over each measured load (user + system, all its threads, from
  \`/proc/PID/stat\`; the main thread's alone from \`/proc/PID/task/PID/stat\`), divided by the calls it
  answered; the load generator's is the bench process's own (autocannon runs in it). It shows what a
  call costs whatever else shares the cores; CPU time also grows when cores are contended, so compare
  the two sides of one run, not runs.
- **Latency at half saturation.** The service's saturating rate is its throughput on the mix above;
  half of it is then sent to each process at an even pace (autocannon \`overallRate\`), and the p99s
  compared. autocannon records whole milliseconds; a p99 under 1 ms counts as 1 ms.
- **Engine in process.** \`evaluateHook\` against \`JSON.parse\` alone of the same request text, medians of
  interleaved loops (the pure-pipeline table below also keeps the older parse + stringify yardstick);
  the median of the examples' ratios, and the ratio on the 70 KB request.
- **Bulk.** \`demo-export\` writes an invented export; a process that only reads and \`JSON.parse\`s every
  NDJSON line of it (a 64 KB chunk at a time, split into lines, as simulate's own reader does; the
  "before" column's floor awaited node:readline once a line, which made it slower), and one that runs what \`simulate\` runs (index the export, replay every order under
  two bundled policies: based-on-bts-2017 as the baseline, based-on-tsanz-2015 as the proposed), take turns; the faster of each is kept. Throughput is
  NDJSON lines a second. Peak memory is each simulate process's maxRSS; "flat" is read here as the larger
  export (4 × the orders) peaking at no more than 1.2 × the smaller's.
- **Cold start.** From spawning \`node dist/server.js\` in production mode with a new data directory to
  its first 200, polling every 5 ms: on \`GET /healthz\` in one start, on a signed hook call in another;
  the median of the starts.
- The machine is shared (2 cores, other people's work on them): figures move from run to run, which is
  why every target is a ratio taken within one run, and the load average is printed below.

${httpTable(targets ?? { figures: [] })}

${[memoryLine(targets ?? { figures: [] }), throughputCpuLine(targets ?? { figures: [] })].filter((line) => line !== undefined).join(' ')}

${[bulkTable(targets ?? { figures: [] }), bulkSplitPart(targets ?? { figures: [] })].filter((part) => part !== '').join('\n\n')}

${coldTable(targets ?? { figures: [] })}`;
}

/** The before file's content from this run's figures. */
export function beforeFileText(figures: readonly TargetFigure[], commit: string, date: string, note: string): string {
  const known = new Set(TARGETS.map((t) => t.id));
  const before: BeforeFigures = { commit, date, note, figures: figures.filter((f) => known.has(f.id)) };
  return `${JSON.stringify(before, null, 2)}\n`;
}
