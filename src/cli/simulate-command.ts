import { existsSync, statSync } from 'node:fs';
import { z } from 'zod';
import { buildExportIndex, exportFiles, type ExportIndex } from '../bulk/export-index.js';
import { runSimulation, type SimulationPolicy } from '../bulk/simulate.js';
import { renderSimulationReport } from '../bulk/simulation-report-html.js';
import { formatSimulationSummary, simulationJson } from '../bulk/simulation-summary.js';
import { describeNdjsonProblem } from '../bulk/ndjson-reader.js';
import { ENV_DEFAULTS } from '../config/env-config.js';
import { formatLoadProblems, loadPolicyAndCards } from '../config/load-files.js';
import { UsageError, writeOutputFile, type CliIo, type ExitCode } from './cli-io.js';
import { DEFAULT_POLICY_PATH } from './load-policy.js';
import { checkOptions, parseOptions } from './parse-options.js';
import { createProgress } from './progress-bar.js';

export const SIMULATE_USAGE = `Usage: oxygen-order-checker simulate --policy NEW [--baseline OLD] [--json FILE|-] [--html FILE] EXPORT_DIR

Replays every oxygen order (MedicationRequest, ServiceRequest, DeviceRequest) of a FHIR Bulk Data
export (NDJSON files in EXPORT_DIR) as the order-sign call the EHR would have made when it was signed,
with the record as it stood then (Observations known by its authoredOn, Conditions recorded by then,
the encounter, the oxygen orders in force), under the baseline and the new policy. Prints the
advisories by rule and indicator under each, the orders whose advice changed with examples, and the
orders skipped and why. Advisory only: what the service would have said, not what happened.
  --policy      the new policy file
  --baseline    the policy to compare with (default: the bundled BTS 2017 policy)
  --cards       card template folder (default: the bundled cards/)
  --json        write the results as JSON to FILE, or to stdout with '-' (the summary then goes to stderr)
  --html        write a self-contained HTML report with charts to FILE
  --index-dir   where the temporary SQLite index goes (default: the system's temp folder)
  --keep-index  keep the index file afterwards and print its path
  --quiet       no progress on stderr (a bar on a terminal, a line every 10 % otherwise)
The export is read a line at a time into the on-disk index, so memory stays flat as it grows.
Exit 0 when it ran (whatever changed), 1 when the export or an output file could not be read or
written, 2 for a usage or policy error.`;

const SimulateOptionsSchema = z.strictObject({
  policy: z.string({ error: 'is required: the new policy file' }),
  baseline: z.string().optional(),
  cards: z.string().optional(),
  json: z.string().optional(),
  html: z.string().optional(),
  indexDir: z.string().optional(),
  keepIndex: z.boolean().optional(),
  quiet: z.boolean().optional(),
});

async function loadSide(file: string, cardsDir: string, which: string): Promise<SimulationPolicy> {
  const loaded = await loadPolicyAndCards({ policyPath: file, cardsDir });
  if (loaded.kind === 'invalid') {
    throw new UsageError(`the ${which} policy cannot be used:\n${formatLoadProblems(loaded.problems)}`);
  }
  return { file, policy: loaded.policy, policyContentHash: loaded.policyContentHash, templates: loaded.templates };
}

export async function runSimulateCommand(args: readonly string[], io: CliIo): Promise<ExitCode> {
  const parsed = parseOptions(args, {
    policy: { type: 'string' },
    baseline: { type: 'string' },
    cards: { type: 'string' },
    json: { type: 'string' },
    html: { type: 'string' },
    'index-dir': { type: 'string' },
    'keep-index': { type: 'boolean' },
    quiet: { type: 'boolean' },
  });
  if (parsed.values['help'] === true) {
    io.stdout(`${SIMULATE_USAGE}\n`);
    return 0;
  }
  const [exportDir, ...extra] = parsed.positionals;
  if (exportDir === undefined || extra.length > 0) {
    throw new UsageError('give exactly one EXPORT_DIR');
  }
  const options = checkOptions(SimulateOptionsSchema, {
    policy: parsed.values['policy'],
    baseline: parsed.values['baseline'],
    cards: parsed.values['cards'],
    json: parsed.values['json'],
    html: parsed.values['html'],
    indexDir: parsed.values['index-dir'],
    keepIndex: parsed.values['keep-index'],
    quiet: parsed.values['quiet'],
  });
  const cardsDir = options.cards ?? ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR;
  const baseline = await loadSide(options.baseline ?? DEFAULT_POLICY_PATH, cardsDir, 'baseline');
  const proposed = await loadSide(options.policy, cardsDir, 'new');

  if (!existsSync(exportDir) || !statSync(exportDir).isDirectory() || exportFiles(exportDir).length === 0) {
    io.stderr(`oxygen-order-checker simulate: ${exportDir} is not a folder of NDJSON files (a Bulk Data export)\n`);
    return 1;
  }
  const quiet = options.quiet === true;
  const say = (text: string): void => {
    if (!quiet) io.stderr(text);
  };
  say('Indexing the export...\n');
  let index: ExportIndex;
  try {
    index = await buildExportIndex(exportDir, {
      ...(options.indexDir === undefined ? {} : { indexDir: options.indexDir }),
      keepIndex: options.keepIndex === true,
    });
  } catch (error) {
    const code = (error as { code?: unknown } | null)?.code;
    io.stderr(`oxygen-order-checker simulate: cannot index ${exportDir}${typeof code === 'string' ? ` (${code})` : ''}\n`);
    return 1;
  }
  let report;
  try {
    const progress = createProgress(quiet ? 'quiet' : io.stderrIsTerminal === true ? 'bar' : 'lines', io.stderr, 'Replaying orders');
    report = await runSimulation(index, baseline, proposed, progress.update);
    progress.finish();
  } finally {
    index.close();
  }
  if (options.keepIndex === true) {
    say(`Index kept at ${index.path}\n`);
  }
  for (const problem of report.malformedLines.first) {
    say(`  skipped ${describeNdjsonProblem(problem)}\n`);
  }

  const summary = formatSimulationSummary(report, exportDir);
  let ok = true;
  if (options.json === '-') {
    io.stdout(`${JSON.stringify(simulationJson(report, exportDir), null, 2)}\n`);
    say(summary);
  } else {
    io.stdout(summary);
    if (options.json !== undefined) ok = writeOutputFile(io, 'simulate', options.json, `${JSON.stringify(simulationJson(report, exportDir), null, 2)}\n`) && ok;
  }
  if (options.html !== undefined) ok = writeOutputFile(io, 'simulate', options.html, renderSimulationReport(report, exportDir)) && ok;
  return ok ? 0 : 1;
}
