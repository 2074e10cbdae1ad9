import {
  CDS_HOOKS_BUDGET_MS,
  NOISE_PERCENT,
  engineLimit,
  findings,
  loadTable,
  microFinding,
  microTable,
  phaseFindings,
  phaseTable,
  type RunReport,
} from './report.js';
import { dominantAreas, profileSection } from './profile-report.js';
import {
  BUDGET_SHARE_WELL_INSIDE,
  auditFindings,
  auditLoadTable,
  auditMicroFinding,
  auditMicroTable,
  feedbackTable,
} from './audit-report.js';
import type { AuditReport } from './report.js';
import { renderTargetsSection } from './targets-doc.js';
import type { BeforeFigures } from './targets.js';

/**
 * The audit trail's section: how to read it, then the figures. "Noticeably" (the requirement's word) is
 * given a meaning here: the audit-on / audit-off throughput ratio within the run-to-run noise, and p99
 * with the audit on well inside the CDS Hooks budget.
 */
/** Which code the in-process figures (micro-benchmarks, pure-path profile, bulk) ran, as a phrase. */
export function inProcessCode(runner: string): string {
  return runner === 'dist'
    ? "in a child process on the service's own tsc build, run by plain `node` (the code production runs)"
    : 'in a child process from source through tsx (`--runner tsx`: slower than the build, which production runs)';
}

export function renderAuditSection(audit: AuditReport | undefined, baselineReqPerSec: number, micro: RunReport['micro']): string {
  if (audit === undefined) {
    return '### Audit trail\n\nNot measured in this run.';
  }
  return `### Audit trail

Every card a hook call returns is committed to the audit trail (SQLite, WAL, \`synchronous = FULL\`:
one fsync a call) before the answer goes out, and it must not slow the hook call noticeably. Here
that means two things, both read from this one run: the throughput with the audit on
is within ±${NOISE_PERCENT} % (the run-to-run noise of these machines) of the throughput with it off, i.e.
"on / off req/s" between ${(1 - NOISE_PERCENT / 100).toFixed(2)} × and ${(1 + NOISE_PERCENT / 100).toFixed(2)} ×; and p99 with the audit on stays well
inside the ${CDS_HOOKS_BUDGET_MS} ms CDS Hooks budget (at most ${(100 * BUDGET_SHARE_WELL_INSIDE).toFixed(0)} % of it).

- **Audit on / audit off.** Two processes of \`bench/audit-service.ts\`, a bench-only entry that builds
  the service's app as \`src/server.ts\` does in demo mode; one uses the store as shipped, the other
  the same store with \`recordAdvisories\` made a no-op. Nothing in the shipped service can turn the
  audit trail off. Both load the service's modules from the same build as the rest of the run (only the
  entry file goes through tsx), each with a new data directory, and take turns on each
  order-sign case (on first, then off first), so drift over the run falls on both. Before the loads the
  bench checks that both answer the same cards, that the audit-on process records them and that the
  audit-off process does not.
- **A fresh hookInstance on every call.** A card's uuid is derived from the hookInstance, and a card
  already on record is skipped, so resending one body would time an audit write that inserts nothing.
  These loads give every call a new hookInstance (the rows in the HTTP table above resend one body, so
  after the first call their audit write inserts nothing). The bench makes the new bodies in its own
  process, for both arms alike.
- **Feedback.** \`POST /cds-services/{id}/feedback\` on the audit-on process, one item a call, each a
  new record (its own outcome time) on one of the cards the service issued and recorded just before,
  so each call is one committed transaction. The bench raises \`OXYGEN_CHECKER_FEEDBACK_MAX_PER_CLIENT_DAY\`
  for these processes so the load measures the commit, not the daily quota's refusal. "× baseline" is
  to the run's \`GET /healthz\` baseline, as in the table above.
- **In process.** \`store.recordAdvisories\` with one call's records for the example (fresh card
  uuids each time) on a store in a new temporary folder, opened as the service opens it, beside the
  example's \`evaluateHook\` median from the pure-pipeline table.

${auditLoadTable(audit.http.pairs, baselineReqPerSec)}

${feedbackTable(audit.http.feedback, baselineReqPerSec)}

${auditFindings(audit, baselineReqPerSec).map((line) => `- ${line}`).join('\n')}

${auditMicroTable(audit.micro, micro)}

- ${auditMicroFinding(audit.micro, micro)}`;
}

/**
 * Under the pure-pipeline table: its evaluateHook median split into phases, so issue 9's engine target
 * can be checked phase by phase. Only facts and facts + rules are timed on their own; the cards' share
 * is left as a difference because evaluateHook does not expose them as a separate call.
 */
export function renderPhasesSection(micro: RunReport['micro']): string {
  return `#### Where an evaluation's time goes

A separate pass, run after every loop above in the same process, times \`JSON.parse\`, the first
two phases of \`evaluateHook\` on their own and \`evaluateHook\` again, taking turns in rounds of their
own, on the same gathered data, policy and clock, called as it calls them: reading the facts
(\`extractFacts\`, src/fhir/extract-facts.ts), and reading the facts then running the rules
(\`evaluateOrder\`, src/core/engine.ts). It runs last because calls to the phases alone, made before
the target's loops, changed what those loops measured. "Cards and the rest" is the pass's
\`evaluateHook\` median minus its facts + rules median:
a difference of medians, so an estimate rather than a timed loop (noise can even make it negative). It covers building the cards, each card's
workings and audit record, and finding the service and reading the context. Every figure is a median
in µs, with its multiple of the same pass's \`JSON.parse\` median in brackets; the pass's medians may
differ a little from the table above. Issue 9's engine target is \`evaluateHook\` ≤ ${engineLimit()} ×
\`JSON.parse\`, on the median over the examples and on the 70 KB request (the last row) by itself, and
is judged from the table above.

${phaseTable(micro)}

${phaseFindings(micro).map((line) => `- ${line}`).join('\n')}`;
}

/** docs/performance.md, written whole from one run (`npm run bench -- --write-doc`). */
export function renderPerformanceDoc(report: RunReport, before?: BeforeFigures): string {
  const m = report.machine;
  const s = report.settings;
  const sections: string[] = [];
  sections.push(`# Performance

Every figure on this page comes from one run of \`npm run bench -- --write-doc\`, on ${m.date}.
Do not edit the numbers by hand: run the bench again.

## How to run and read it

- \`npm run bench\` builds the service into a private temporary folder (as \`npm start\` does), starts
  it on 127.0.0.1 at a free port in demo mode with \`LOG_LEVEL=warn\`, loads it with autocannon, runs
  the audit trail's comparison (audit on against audit off, and the feedback route), the issue-9
  targets (the service in production mode against a bare express + same-token baseline, cold start,
  bulk simulation against a read-and-parse loop), the in-process micro-benchmarks and two short CPU
  profiles, prints the tables, and stops every process it started. It is not part of \`npm test\`
  (\`npm test\` runs each new part once with tiny sizes and checks what it produces, never its speed).
- Options (after \`--\`): \`--write-doc\` rewrites this page; \`--write-before\` keeps the run's target
  figures as the "before" column (\`bench/before-issue-9.json\`); \`--quick\` makes short runs to check that
  the bench works (not for this page); \`--runner tsx\` runs \`src/server.ts\` through tsx instead of
  building; \`--all-examples\` loads every order-sign example; \`--no-profile\` skips the profiles;
  \`--duration S\`, \`--warmup S\`, \`--connections N\`, \`--iterations N\`.
- **Read the ratios, not the raw req/s.** These machines have 2 cores shared with other work and vary
  by about ±${NOISE_PERCENT} % from run to run, so absolute figures move; a ratio to a baseline measured in
  the same run moves much less. "0.31 ×" means the case served 0.31 times the baseline's requests per
  second.
- **Baseline**: \`GET /healthz\` on the same service: the same express app and middleware (security
  headers, request id, CORS) with no body and nothing to evaluate, the floor for any call to this
  service. It is measured first and last; ratios use the mean of the two, and the drift is printed.
- **JSON echo**: a bare express app in its own process (\`bench/json-echo-server.ts\`) that parses the
  largest order-sign request and answers with the service's own answer to it: what moving that much
  JSON through express costs, with none of this service's work.
- **Latency** is autocannon's, with ${s.connections} connections kept busy, so it includes waiting behind the
  other calls in flight on one node process; one call on its own is faster. autocannon records whole
  milliseconds.
- **Budget**: CDS Hooks 2.0 (§Providing FHIR Resources) asks services to answer "on the order of
  ${CDS_HOOKS_BUDGET_MS} ms"; the last column gives p99 as a percent of that.
- The bench exits 1 if any answer under load was not 2xx, if a connection failed, or if a call's card
  count differed between the check before its load and the check after. The one exception is the
  service's answers in the issue-9 target loads: a call it refuses there counts against its target.`);

  sections.push(renderTargetsSection(report.targets, before, { micro: report.micro, cpus: report.machine.cpus }));

  sections.push(`## Latest run

- Date: ${m.date}
- Machine: ${m.cpus} CPUs (${m.cpuModel}), ${m.platform}, load average (1 / 5 / 15 min) ${m.loadAverage.map((v) => v.toFixed(2)).join(' / ')} at the start and ${m.loadAverageEnd.map((v) => v.toFixed(2)).join(' / ')} at the end (other work on the machine shows here)
- Node ${m.node}
- Code: commit ${m.commit}${m.uncommitted.length > 0 ? `, with uncommitted changes to ${m.uncommitted.map((path) => `\`${path}\``).join(', ')}` : ', no uncommitted changes to src/, cards/, policies/ or examples/'}
- Service: ${s.runner === 'dist' ? `built with tsc and run as \`node dist/server.js\` (build took ${(s.buildS ?? 0).toFixed(0)} s)` : 'run from source with `node --import tsx src/server.ts`'}, demo mode, \`LOG_LEVEL=warn\`, default limits
- Load: autocannon, ${s.connections} connections, ${s.warmupS} s warm-up (discarded) then ${s.durationS} s measured, per case, after a throwaway load on each process
- Micro-benchmark: ${s.microIterations} timed iterations per loop per example, ${inProcessCode(s.runner)}${s.microPrimeCalls === undefined ? '' : `, after ${s.microPrimeCalls} throwaway calls of the pure path over all the examples`}
${s.primeCalls === undefined ? '' : `- Issue-9 HTTP loads: ${s.primeCalls} throwaway signed calls to the service and to the token baseline alike (the mix and the 70 KB request) before the first measured load\n`}${s.elapsedS === undefined ? '' : `- The whole run took ${Math.round(s.elapsedS / 60)} min (${Math.round(s.elapsedS)} s), build included\n`}
### HTTP load

${loadTable(report)}

${findings(report).map((line) => `- ${line}`).join('\n')}

### Pure pipeline, in process

These loops ran ${inProcessCode(s.runner)}. \`evaluateHook\` (src/cds/evaluate-hook.ts) over the data gathered from the request's prefetch, against
\`JSON.parse\` + \`JSON.stringify\` of the same request text as the baseline, and against \`JSON.parse\`
alone (issue 9's yardstick). The last row is the 70 KB request of \`bench/large-request.ts\`. "Whole pure path" is what
the service does per call apart from HTTP: parse the text, validate it (\`parseHookRequest\`), gather
the prefetch, evaluate, and serialise the answer. The ratios compare medians: on a shared machine a
pause lands on whichever loop is running, and a mean takes it in full; the p99 shows how far such
pauses reach.

${microTable(report.micro)}

- ${microFinding(report.micro)}

${renderPhasesSection(report.micro)}

${renderAuditSection(report.audit, report.baseline.meanReqPerSec, report.micro)}`);

  const profiles: string[] = ['### What dominates', ''];
  if (report.serviceProfile === undefined && report.microProfile === undefined) {
    profiles.push('Not profiled in this run (`--no-profile`).');
  } else {
    profiles.push(
      `Two \`node --cpu-prof\` profiles of ${report.profiledExample ?? 'the largest order-sign example'}: the service under the same load, and the whole pure path in a loop. Percentages are of the busy (non-idle) samples after start-up. Areas are our source folders, npm packages, node internals, and native code (V8 built-ins such as regular expressions, and node's bindings such as \`writev\`); "our function" counts the time of everything it called. \`JSON.parse\` and \`JSON.stringify\` run in V8's C++ runtime and show as self time of the JavaScript function that calls them: body-parser's \`parse\`, express's \`stringify\`, and in the pure path the bench's own \`parseOrThrow\` and \`runWholePath\`.`,
    );
    if (report.serviceProfile !== undefined) {
      profiles.push('', `- In the service under load, ${dominantAreas(report.serviceProfile)}`);
    }
    if (report.microProfile !== undefined) {
      profiles.push(`- In the pure path, ${dominantAreas(report.microProfile)}`);
    }
    if (report.serviceProfile !== undefined) {
      profiles.push('', profileSection('Service under load', report.serviceProfile));
    }
    if (report.microProfile !== undefined) {
      profiles.push('', profileSection('Pure path', report.microProfile));
    }
  }
  sections.push(profiles.join('\n'));

  sections.push(`## Method

- **Why a build.** Production runs \`npm start\`: tsc, then \`node dist/server.js\`. The bench does the
  same into a private temporary folder (so it never rewrites the shared \`dist/\` under another
  process), pointing \`OXYGEN_CHECKER_POLICY\` and \`OXYGEN_CHECKER_CARDS_DIR\` at the bundled files. \`--runner tsx\`
  runs the same code through tsx, which is slower than the build: its transform (esbuild with
  \`keepNames\`) adds a \`__name\` call each time an inner function is created, which tsc's output has not.
- **Which code the in-process figures run.** The micro-benchmarks (\`evaluateHook\` × \`JSON.parse\`, the
  whole pure path, \`store.recordAdvisories\`), the pure-path profile and both bulk processes (simulate
  and the read-and-parse loop) each run in a child process on the service's own build: their entries
  (\`bench/micro-child.ts\`, \`bench/profile-micro.ts\`, \`bench/bulk-child.ts\`) are compiled in the same
  tsc run, into the same folder, and run by plain \`node\`, so they time the JavaScript production runs.
  With \`--runner tsx\` they run through tsx, as the service then does. The JSON echo and the token
  baseline run the same way as the service (from the build by plain \`node\`, or through tsx), so
  neither side of a ratio pays for a loader the other has not.
- **Processes.** The service and the JSON echo each run in their own process group on 127.0.0.1 with
  port 0 (the address is read from the start-up log line and must be loopback). The bench waits for
  \`/healthz\`, and at the end sends SIGTERM to each group, then SIGKILL if it has not gone within a
  few seconds; an exit handler kills any group left. autocannon runs in the bench's own process.
- **Requests.** The example hook calls in \`examples/\`, each moved to now with the CLI's retime logic
  (\`src/cli/retime-request.ts\`, as \`oxygen-order-checker retime\` does), so the service judges them as live calls
  and nothing is stale. The order-sign cases are named in \`bench/cases.ts\`, plus the largest
  order-sign example found by size; every order-select example is run. Each call is checked once
  before and once after its load.
- **Priming.** Before the first measurement each process gets a throwaway load (the service's
  \`/healthz\` and its largest order-sign call, the echo), so that neither the JIT's first work nor
  autocannon's own start lands on the first baseline. Before the issue-9 HTTP loads the production
  service and the token baseline each get the same count of throwaway signed calls
  (${s.primeCalls === undefined ? 'a few seconds each' : `${s.primeCalls} each`}), a count rather than a
  time so the faster side is not primed more: V8 was still optimising the service's code about 750
  calls into a load primed with a few hundred. The micro-benchmark's process runs the pure path over
  all the examples (${s.microPrimeCalls === undefined ? 'a short warm-up' : `${s.microPrimeCalls} calls`}) before
  its first timed loop, then each example's own warm-up.
- **Bounds.** Every load stops after its duration, after a cap on requests, and by a watchdog if
  autocannon overruns. The micro-benchmark loops stop at their iteration count or a time cap.
- **Micro-benchmark.** The four loops (parse + stringify, \`JSON.parse\`, \`evaluateHook\`, whole path)
  take turns in rounds after a warm-up, so a slow moment on a shared machine falls on all of them;
  each iteration is timed with \`performance.now()\`. The phase pass (\`JSON.parse\`, facts, facts +
  rules, \`evaluateHook\`) runs the same way, after all of them and the audit write's loops.
- **Profiles.** The service is started a second time with \`--cpu-prof\` and loaded with the largest
  order-sign example; the pure path runs in a child process with \`--cpu-prof\`. Both are read by
  \`bench/cpu-profile.ts\`. Line numbers are those of the JavaScript that ran (tsc's or tsx's output).

## Limits

- The service and autocannon share one 2-core machine, so these figures compare the cost of calls;
  they are not the capacity of a deployment.
- The HTTP load, audit and profile tables run in demo mode: no client JWT is checked there. The
  issue-9 targets run in production mode, with one ES384 signature check per call on both sides.
- Prefetch is supplied in every example, as the CDS Hooks latency advice assumes; calls that need the
  FHIR fallback wait on the FHIR server and are bounded by \`OXYGEN_CHECKER_FHIR_BUDGET_MS\` instead.
`);
  return `${sections.join('\n\n')}\n`;
}
