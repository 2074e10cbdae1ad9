import { mkdirSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import { dirname, join, relative } from 'node:path';
import { z } from 'zod';
import { evaluateHook } from '../cds/evaluate-hook.js';
import { parseHookRequest } from '../cds/parse-hook-request.js';
import { ENV_DEFAULTS } from '../config/env-config.js';
import { formatLoadProblem, loadPolicyAndCards, type LoadedFiles } from '../config/load-files.js';
import { createGatherer } from '../http/gather-data.js';
import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { junitXml, type JunitCase } from './junit-xml.js';
import { checkOptions, parseOptions } from './parse-options.js';
import { compareCards, loadPolicyCase, type LoadedCase, type ObservedCard, type PolicyCase, type ReadyCase } from './policy-cases.js';

export const POLICY_TEST_USAGE = `Usage: oxygen-order-checker policy test FILE CASES_DIR [--junit FILE] [--cards DIR]

Runs the hospital's own regression cases against a policy file, through the same engine as the
service, offline. The policy is validated first. Each case is one YAML file in CASES_DIR (or a folder
below it): a saved hook request, the moment to evaluate it at and the cards expected (rule ids with
their indicators, rules that must not appear, the target range advised, whether a one-click change is
offered). Cards a case does not mention are allowed unless it says only: true. The format is in
docs/policy.md, "Test it against your own cases".
  --junit  also write the results as JUnit XML to this file, for a CI server
  --cards  card template folder (default: the bundled cards/)
Prints a pass/fail table. Exit 0 when every case passed, 1 when any failed (a case file that cannot
be read counts as failed), 2 for a usage error or a policy that is not valid.`;

const OptionsSchema = z.strictObject({
  junit: z.string().min(1).optional(),
  cards: z.string().min(1).optional(),
});

/** Offline: no FHIR server is ever called, so the fetch the gatherer holds must never run. */
const refuseFetch: typeof fetch = () => Promise.reject(new Error('oxygen-order-checker policy test does not call FHIR servers'));

type LoadedPolicy = Extract<LoadedFiles, { kind: 'ok' }>;

interface CaseResult {
  readonly file: string;
  readonly name: string;
  readonly expected: readonly string[];
  readonly got: readonly string[];
  readonly differences: readonly string[];
  readonly kind: 'passed' | 'failed' | 'invalid-case';
}

/** Every *.yaml / *.yml below the folder, in path order; hidden folders and files are skipped. */
function caseFiles(dir: string): string[] {
  const found: string[] = [];
  const walk = (folder: string): void => {
    const entries = readdirSync(folder, { withFileTypes: true }).sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
    for (const entry of entries) {
      if (entry.name.startsWith('.')) continue;
      const path = join(folder, entry.name);
      if (entry.isDirectory()) {
        walk(path);
        continue;
      }
      // A linked file is read (a case shared between folders); a linked folder is not, so no loop.
      const isFile = entry.isFile() || (entry.isSymbolicLink() && statSync(path, { throwIfNoEntry: false })?.isFile() === true);
      if (isFile && /\.ya?ml$/.test(entry.name)) found.push(path);
    }
  };
  walk(dir);
  return found;
}

function expectedWords(expect: PolicyCase['expect']): string[] {
  const suggestion = (value: boolean | undefined): string =>
    value === undefined ? '' : value ? ' + suggestion' : ', no suggestion';
  return [
    ...expect.cards.map((card) => `${card.indicator} ${card.rule}${suggestion(card.suggestion)}`),
    ...expect.absent.map((id) => `not ${id}`),
    ...(expect.advisedTarget === undefined
      ? []
      : [expect.advisedTarget === 'none' ? 'no target advised' : `advises ${expect.advisedTarget.lowPercent}–${expect.advisedTarget.highPercent} %`]),
    ...(expect.only ? ['only these cards'] : []),
  ];
}

function gotWords(cards: readonly ObservedCard[]): string[] {
  if (cards.length === 0) return ['no cards'];
  return cards.map(
    (card) =>
      `${card.indicator} ${card.ruleId}${card.suggestion ? ' + suggestion' : ''}` +
      `${card.advisedRange === undefined ? '' : `, advises ${card.advisedRange}`}`,
  );
}

async function runCase(loaded: ReadyCase, policy: LoadedPolicy): Promise<{ cards: ObservedCard[] } | { unavailable: string }> {
  const request = parseHookRequest(loaded.serviceId, loaded.body);
  if (request.kind !== 'ok') {
    // loadPolicyCase checked this already; kept so a change there cannot run an unchecked request.
    return { unavailable: 'the request is not valid' };
  }
  const gather = createGatherer({
    fetch: refuseFetch,
    limits: { callTimeoutMs: 1, budgetMs: 1, maxResponseBytes: 0, maxPages: 1 },
  });
  const { fhirServer: _server, fhirAuthorization: _token, ...offline } = request.request;
  const gathered = await gather(offline, request.service.prefetch);
  if (gathered.kind === 'unavailable') {
    return {
      unavailable: `required data is missing from the request's prefetch (${gathered.unavailable.map((u) => u.key).join(', ')}): the service would answer 412 and show no cards`,
    };
  }
  const evaluation = evaluateHook(
    { serviceId: loaded.serviceId, request: request.request, data: gathered.data },
    { policy: policy.policy, policyContentHash: policy.policyContentHash, templates: policy.templates, now: loaded.now },
  );
  return {
    cards: evaluation.response.cards.map((card, index) => {
      const audit = evaluation.audit.cards[index];
      return {
        ruleId: audit?.ruleId ?? card.source.topic?.code ?? '(unknown rule)',
        indicator: card.indicator,
        suggestion: (card.suggestions?.length ?? 0) > 0,
        advisedRange: audit?.keyNumbers['advisedRange'],
      };
    }),
  };
}

async function resultOf(loaded: LoadedCase, policy: LoadedPolicy, casesDir: string): Promise<CaseResult> {
  const file = relative(casesDir, loaded.file) || loaded.file;
  if (loaded.kind === 'broken') {
    return {
      file,
      name: loaded.name ?? file,
      expected: ['(case file not valid)'],
      got: ['-'],
      differences: loaded.problems.map((p) => `${file}:${p.line}:${p.column}: ${p.path}: ${p.message}`),
      kind: 'invalid-case',
    };
  }
  const expect = loaded.policyCase.expect;
  let outcome: Awaited<ReturnType<typeof runCase>>;
  try {
    outcome = await runCase(loaded, policy);
  } catch (error) {
    // A request the checks let through but the engine cannot take is this case's failure, not the run's.
    const kind = error instanceof Error ? error.name : 'error';
    outcome = { unavailable: `the engine could not evaluate this request (${kind}); please report it with the case file` };
  }
  if ('unavailable' in outcome) {
    return { file, name: loaded.policyCase.name, expected: expectedWords(expect), got: ['no cards'], differences: [outcome.unavailable], kind: 'failed' };
  }
  const differences = compareCards(expect, outcome.cards);
  return {
    file,
    name: loaded.policyCase.name,
    expected: expectedWords(expect),
    got: gotWords(outcome.cards),
    differences,
    kind: differences.length === 0 ? 'passed' : 'failed',
  };
}

/** A plain-text table; a cell may hold several lines, and the row is as tall as its tallest cell. */
function table(header: readonly string[], rows: readonly (readonly (readonly string[])[])[], notes: readonly (readonly string[])[]): string {
  const widths = header.map((title, column) =>
    Math.max(title.length, ...rows.flatMap((row) => (row[column] ?? []).map((line) => line.length))),
  );
  const line = (cells: readonly string[]): string =>
    cells.map((cell, column) => (column === cells.length - 1 ? cell : cell.padEnd(widths[column] ?? 0))).join('  ').trimEnd();
  const out = [line(header), line(widths.map((w) => '-'.repeat(w)))];
  rows.forEach((row, index) => {
    const height = Math.max(...row.map((cell) => cell.length));
    for (let i = 0; i < height; i += 1) {
      out.push(line(row.map((cell) => cell[i] ?? '')));
    }
    for (const note of notes[index] ?? []) {
      out.push(`      what differed: ${note}`);
    }
  });
  return `${out.join('\n')}\n`;
}

export async function runPolicyTestCommand(args: readonly string[], io: CliIo): Promise<ExitCode> {
  const parsed = parseOptions(args, { junit: { type: 'string' }, cards: { type: 'string' } });
  if (parsed.values['help'] === true) {
    io.stdout(`${POLICY_TEST_USAGE}\n`);
    return 0;
  }
  const [policyFile, casesDir, ...extra] = parsed.positionals;
  if (policyFile === undefined || casesDir === undefined || extra.length > 0) {
    throw new UsageError('give a policy FILE and a CASES_DIR');
  }
  const options = checkOptions(OptionsSchema, { junit: parsed.values['junit'], cards: parsed.values['cards'] });

  const loaded = await loadPolicyAndCards({ policyPath: policyFile, cardsDir: options.cards ?? ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR });
  if (loaded.kind === 'invalid') {
    io.stderr(
      `oxygen-order-checker policy test: the policy is not valid, so no case was run:\n` +
        `${loaded.problems.map((p) => `  ${formatLoadProblem(p)}`).join('\n')}\n`,
    );
    return 2;
  }

  let files: string[];
  try {
    files = caseFiles(casesDir);
  } catch (error) {
    const code = (error as { code?: unknown } | null)?.code;
    throw new UsageError(`cannot read the cases folder ${casesDir}${typeof code === 'string' ? ` (${code})` : ''}`);
  }
  if (files.length === 0) {
    throw new UsageError(`no case files (*.yaml) in ${casesDir}`);
  }

  const results: CaseResult[] = [];
  for (const file of files) {
    results.push(await resultOf(loadPolicyCase(file, io.readFile), loaded, casesDir));
  }
  const failed = results.filter((r) => r.kind !== 'passed');
  const { policy, policyContentHash } = loaded;

  const warnings = loaded.policyWarnings.map((p) => `  warning: ${formatLoadProblem(p)}\n`).join('');
  io.stdout(
    `Policy ${policy.id} v${policy.version} (sha256 ${policyContentHash.slice(0, 12)}), ${results.length} case(s) in ${casesDir}\n` +
      warnings +
      '\n' +
      table(
        ['RESULT', 'CASE', 'EXPECTED', 'GOT'],
        results.map((r) => [[r.kind === 'passed' ? 'pass' : 'FAIL'], [r.name, `(${r.file})`], r.expected, r.got]),
        results.map((r) => r.differences),
      ) +
      `\n${results.length - failed.length} passed, ${failed.length} failed` +
      ' (advisory checks only: a passing case shows the policy gives the advice the team expects, not that the advice is right for a patient)\n',
  );

  if (options.junit !== undefined) {
    const cases: JunitCase[] = results.map((r) => ({
      name: r.name,
      classname: `policy-cases.${r.file.replace(/\.ya?ml$/, '').replace(/[\\/]/g, '.')}`,
      ...(r.kind === 'passed'
        ? {}
        : {
            failure: {
              message: r.differences[0] ?? 'failed',
              type: r.kind === 'invalid-case' ? 'invalid-case' : 'expectation',
              detail: [...r.differences, '', `expected: ${r.expected.join('; ')}`, `got: ${r.got.join('; ')}`].join('\n'),
            },
          }),
    }));
    const xml = junitXml({
      name: `policy test: ${policy.id} v${policy.version}`,
      timestamp: io.now(),
      properties: { 'policy.id': policy.id, 'policy.version': policy.version, 'policy.sha256': policyContentHash },
      cases,
    });
    try {
      // A CI job names a report folder it has not made yet (reports/policy-cases.xml): make it.
      mkdirSync(dirname(options.junit), { recursive: true });
      writeFileSync(options.junit, xml, 'utf8');
    } catch (error) {
      const code = (error as { code?: unknown } | null)?.code;
      io.stderr(`oxygen-order-checker policy test: cannot write ${options.junit}${typeof code === 'string' ? ` (${code})` : ''}\n`);
      return 2;
    }
  }
  return failed.length === 0 ? 0 : 1;
}
