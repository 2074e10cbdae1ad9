import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { availableParallelism, cpus, loadavg, platform, release, tmpdir } from 'node:os';
import { join } from 'node:path';
import { performance } from 'node:perf_hooks';
import { fileURLToPath } from 'node:url';
import { measureAudit } from './audit-cases.js';
import { auditFindings, auditLoadTable, auditMicroFinding, auditMicroTable, feedbackTable } from './audit-report.js';
import { createBenchClient, writeTrustFile } from './bench-client.js';
import { measureBulk } from './bulk-cases.js';
import { selectExamples } from './cases.js';
import { measureColdStart } from './cold-start.js';
import { measureHttpTargets, sourcesOf } from './http-targets.js';
import { largeExample } from './large-request.js';
import { bulkFigures, coldStartFigures, engineFigures, httpFigures, judgeAll, targetLines, type TargetFigure } from './targets.js';
import { killAllChildServers } from './child-server.js';
import { measureHttp } from './http-cases.js';
import { runMicroChild } from './micro-process.js';
import { BENCH_USAGE, parseBenchOptions, type BenchOptions } from './options.js';
import { renderPerformanceDoc } from './performance-doc.js';
import { BEFORE_FILE, beforeFileText, loadBeforeFigures } from './targets-doc.js';
import { profileMicro, profileService } from './profiles.js';
import { dominantAreas, profileSection } from './profile-report.js';
import { findings, loadTable, microFinding, microTable, phaseFindings, phaseTable, type AuditReport, type Machine, type RunReport, type TargetsReport } from './report.js';
import { prepareService } from './service-process.js';

/**
 * `npm run bench`: the service's speed, as ratios to baselines measured in the same run (see
 * docs/performance.md, "How to run and read it"). Exit 0 when every measurement is usable, 1 when a
 * call failed or changed its answer under load, 2 for a usage error.
 */

const ROOT = fileURLToPath(new URL('../', import.meta.url));
const cleanUps: (() => void)[] = [];

function progress(line: string): void {
  process.stderr.write(`bench: ${line}\n`);
}

/** The commit measured, and any uncommitted change to what the service runs (read-only git calls). */
function describeSource(): { commit: string; uncommitted: string[] } {
  const git = (args: readonly string[]): string | undefined => {
    const result = spawnSync('git', [...args], { cwd: ROOT, encoding: 'utf8', timeout: 10_000 });
    // Not trimmed: a porcelain line starts with its status columns, a space among them.
    return result.status === 0 ? result.stdout.trimEnd() : undefined;
  };
  const status = git(['status', '--porcelain', '--', 'src', 'cards', 'policies', 'examples', 'package-lock.json']);
  return {
    commit: git(['rev-parse', '--short', 'HEAD']) ?? 'unknown (not a git checkout)',
    uncommitted: (status ?? '').split('\n').filter((line) => line.trim() !== '').map((line) => line.slice(3)),
  };
}

function describeMachine(): Machine {
  return {
    date: new Date().toISOString(),
    node: process.version,
    cpus: availableParallelism(),
    cpuModel: cpus()[0]?.model.trim() ?? 'unknown CPU',
    loadAverage: loadavg(),
    loadAverageEnd: [],
    platform: `${platform()} ${release()}`,
    ...describeSource(),
  };
}

async function runBench(options: BenchOptions): Promise<number> {
  const runStart = performance.now();
  const machine = describeMachine();
  const examples = selectExamples(ROOT, new Date(), options.allExamples);
  const scratch = mkdtempSync(join(tmpdir(), 'oxygen-order-checker-bench-scratch-'));
  cleanUps.push(() => rmSync(scratch, { recursive: true, force: true }));

  progress(options.runner === 'dist' ? 'building the service (tsc) into a private folder' : 'running from source via tsx');
  const buildStart = performance.now();
  const built = prepareService(ROOT, options.runner);
  cleanUps.push(built.cleanUp);
  const buildS = options.runner === 'dist' ? (performance.now() - buildStart) / 1000 : undefined;

  const http = await measureHttp({ root: ROOT, built, examples, options, scratch, progress });
  const audit = await measureAudit({ root: ROOT, built, examples, options, scratch, progress });
  const large = largeExample(new Date());
  const mixExamples = [...examples.sign, ...examples.select];
  const httpTargets = await measureHttpTargets({ root: ROOT, built, examples, options, scratch, progress, mixExamples, large });

  progress(`cold start: ${options.coldStarts} fresh start(s) of the production service per figure`);
  const coldClient = createBenchClient();
  const coldTrust = join(scratch, 'cold-start-trust.json');
  writeTrustFile(coldClient, coldTrust);
  const [coldSource] = sourcesOf([examples.largestSign]);
  if (coldSource === undefined) {
    throw new Error('no example for the cold start');
  }
  const coldStart = await measureColdStart(ROOT, built, coldClient, coldTrust, coldSource, options.coldStarts);

  progress('bulk simulation against a read-and-parse loop over the same NDJSON');
  const bulk = await measureBulk(ROOT, built, scratch, options.bulkOrders, options.bulkRounds, progress);

  progress(
    options.runner === 'dist'
      ? 'micro-benchmarks of the pure pipeline and the audit write, in a child on the same build (plain node)'
      : 'micro-benchmarks of the pure pipeline and the audit write, in a child through tsx',
  );
  const microNow = new Date();
  const { micro, auditMicro } = runMicroChild(ROOT, built, {
    examples: [...examples.sign, ...examples.select, large],
    auditExamples: examples.sign,
    now: microNow.toISOString(),
    micro: {
      iterations: options.microIterations,
      rounds: 4,
      warmupIterations: Math.min(200, options.microIterations),
      maxMsPerLoop: 15_000,
    },
    audit: {
      // One fsync a call: a few hundred calls give a steady median without minutes of disk work.
      iterations: Math.min(options.microIterations, 500),
      warmupIterations: Math.min(20, options.microIterations),
      maxMsPerLoop: 10_000,
    },
    primeCalls: options.microPrimeCalls,
    scratch,
  });

  const notes: string[] = [];
  let serviceProfile: RunReport['serviceProfile'];
  let microProfile: RunReport['microProfile'];
  if (options.profile) {
    progress(`profiling the service and the pure path on ${examples.largestSign.name}`);
    const service = await profileService({ root: ROOT, built, example: examples.largestSign, options, scratch });
    const pure = profileMicro({ root: ROOT, built, example: examples.largestSign, options, scratch });
    if (service.kind === 'ok') {
      serviceProfile = service.summary;
    } else {
      notes.push(`service profile not taken: ${service.reason}`);
    }
    if (pure.kind === 'ok') {
      microProfile = pure.summary;
    } else {
      notes.push(`pure-path profile not taken: ${pure.reason}`);
    }
  }

  const auditReport: AuditReport = {
    http: { pairs: audit.pairs, feedback: audit.feedback, feedbackCards: audit.feedbackCards },
    micro: auditMicro,
  };
  const largeMicro = micro.find((m) => m.name === large.name);
  const figures: TargetFigure[] = [
    ...httpFigures(httpTargets),
    ...engineFigures(micro.filter((m) => m.name !== large.name), largeMicro),
    ...bulkFigures(bulk),
    ...coldStartFigures(coldStart),
  ];
  const { problems: _httpTargetProblems, ...httpTargetFigures } = httpTargets;
  const targets: TargetsReport = { figures, http: httpTargetFigures, largeMicroName: large.name, bulk, coldStart };
  const report: RunReport = {
    machine: { ...machine, loadAverageEnd: loadavg() },
    settings: {
      runner: options.runner,
      connections: options.connections,
      durationS: options.durationS,
      warmupS: options.warmupS,
      buildS,
      microIterations: options.microIterations,
      primeCalls: options.primeCalls,
      microPrimeCalls: options.microPrimeCalls,
      elapsedS: (performance.now() - runStart) / 1000,
    },
    rows: http.rows,
    baseline: http.baseline,
    echo: http.echo,
    logLinesDuringLoad: http.logLinesDuringLoad,
    micro,
    serviceProfile,
    microProfile,
    profiledExample: options.profile ? examples.largestSign.name : undefined,
    audit: auditReport,
    targets,
  };
  const problems = [...http.problems, ...audit.problems, ...httpTargets.problems];

  const out: string[] = [
    'Issue 9 targets (measured side by side in this run):',
    ...targetLines(judgeAll(figures)),
    '',
    `${machine.date}, node ${machine.node}, ${machine.cpus} CPUs, runner ${options.runner}, commit ${machine.commit}` +
      (machine.uncommitted.length > 0 ? ` with uncommitted changes to ${machine.uncommitted.join(', ')}` : ''),
    '',
    loadTable(report),
    '',
    ...findings(report).map((line) => `- ${line}`),
    '',
    microTable(micro),
    '',
    `- ${microFinding(micro)}`,
    '',
    phaseTable(micro),
    '',
    ...phaseFindings(micro).map((line) => `- ${line}`),
    '',
    auditLoadTable(audit.pairs, http.baseline.meanReqPerSec),
    '',
    feedbackTable(audit.feedback, http.baseline.meanReqPerSec),
    '',
    ...auditFindings(auditReport, http.baseline.meanReqPerSec).map((line) => `- ${line}`),
    '',
    auditMicroTable(auditMicro, micro),
    '',
    `- ${auditMicroFinding(auditMicro, micro)}`,
  ];
  if (serviceProfile !== undefined) {
    out.push('', profileSection('Service under load', serviceProfile), '', `- ${dominantAreas(serviceProfile)}`);
  }
  if (microProfile !== undefined) {
    out.push('', profileSection('Pure path', microProfile), '', `- ${dominantAreas(microProfile)}`);
  }
  process.stdout.write(`${out.join('\n')}\n`);
  for (const note of notes) {
    progress(note);
  }

  if (problems.length > 0) {
    progress(`the run is not usable:\n  ${problems.join('\n  ')}`);
    // Kept for finding out what went wrong; never read back into the doc.
    const kept = join(tmpdir(), `oxygen-order-checker-bench-unusable-${machine.date.replace(/[:.]/g, '-')}.json`);
    writeFileSync(kept, `${JSON.stringify(report, null, 2)}\n`);
    progress(`this run's measurements are in ${kept}`);
    if (options.writeDoc) {
      progress('docs/performance.md was not rewritten');
    }
    return 1;
  }
  if (options.writeBefore) {
    const note = `the code before issue 9's speed work, measured by \`npm run bench -- --write-before\` on a shared 2-core machine (load average ${machine.loadAverage.map((v) => v.toFixed(2)).join(' / ')} at the start)`;
    writeFileSync(join(ROOT, BEFORE_FILE), beforeFileText(figures, machine.commit, machine.date, note));
    progress(`wrote ${BEFORE_FILE}`);
  }
  if (options.writeDoc) {
    writeFileSync(join(ROOT, 'docs', 'performance.md'), renderPerformanceDoc(report, loadBeforeFigures(join(ROOT, BEFORE_FILE))));
    progress('wrote docs/performance.md');
  }
  return 0;
}

function cleanUp(): void {
  killAllChildServers();
  for (const step of cleanUps.splice(0).reverse()) {
    step();
  }
}

for (const signal of ['SIGINT', 'SIGTERM'] as const) {
  process.once(signal, () => {
    cleanUp();
    process.exit(130);
  });
}

let options: BenchOptions | undefined;
try {
  options = parseBenchOptions(process.argv.slice(2));
} catch (error) {
  process.stderr.write(`${error instanceof Error ? error.message : String(error)}\n${BENCH_USAGE}\n`);
  process.exit(2);
}
if (options === undefined) {
  process.stdout.write(`${BENCH_USAGE}\n`);
} else {
  try {
    process.exitCode = await runBench(options);
  } catch (error) {
    progress(`failed: ${error instanceof Error ? (error.stack ?? error.message) : String(error)}`);
    process.exitCode = 1;
  } finally {
    cleanUp();
  }
}
