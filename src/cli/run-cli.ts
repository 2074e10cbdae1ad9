import { bundledPath } from '../config/package-root.js';
import { nearestWithin } from '../text/edit-distance.js';
import { AUDIT_USAGE, runAuditCommand } from './audit-command.js';
import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { CONFIG_DOCS_USAGE, runConfigDocsCommand } from './config-docs-command.js';
import { STORE_MIGRATE_USAGE, runStoreMigrateCommand } from './store-migrate-command.js';
import { DEMO_EXPORT_USAGE, runDemoExportCommand } from './demo-export-command.js';
import { EVALUATE_USAGE, runEvaluateCommand } from './evaluate-command.js';
import { FIO2_USAGE, runFio2Command } from './fio2-command.js';
import { GAS_USAGE, runGasCommand } from './gas-command.js';
import { POLICY_DIFF_USAGE, runPolicyDiffCommand } from './policy-diff-command.js';
import { POLICY_SCHEMA_USAGE, runPolicySchemaCommand } from './policy-schema-command.js';
import { POLICY_SHOW_USAGE, runPolicyShowCommand } from './policy-show-command.js';
import { POLICY_VALIDATE_USAGE, runPolicyValidateCommand } from './policy-validate-command.js';
import { POLICY_TEST_USAGE, runPolicyTestCommand } from './policy-test-command.js';
import { RETIME_USAGE, runRetimeCommand } from './retime-command.js';
import { runSimulateCommand, SIMULATE_USAGE } from './simulate-command.js';

export const BIN = 'oxygen-order-checker';

/** The headings the command list is grouped under, by the people who use each command. */
const SECTIONS = {
  orders: 'Check an order or a calculation (prescribers, pharmacists, integration engineers):',
  policy: "Write and check the local policy (the hospital's oxygen team):",
  records: "Look back at past orders (the oxygen team's audit and simulation):",
} as const;

type Section = keyof typeof SECTIONS;

interface Command {
  readonly run: (args: readonly string[], io: CliIo) => ExitCode | Promise<ExitCode>;
  /** The command's full usage text, starting `Usage: oxygen-order-checker NAME ...`. */
  readonly usage: string;
  /** One line for the command list; by default the first line of the usage text's description. */
  readonly summary?: string;
  /** Where the command list shows it; by default `policy` for the policy group, else `orders`. */
  readonly section?: Section;
  /** An old name kept working, left out of the command list; it names the command that replaced it. */
  readonly renamedTo?: string;
}

/**
 * Every command, one line each. A name with a space is a subcommand of a group: `policy diff` is run
 * as `oxygen-order-checker policy diff OLD NEW`, and `oxygen-order-checker policy` lists the group.
 * The command list, `help`, the groups and "did you mean" are all built from this table.
 */
const COMMANDS: Readonly<Record<string, Command>> = {
  evaluate: { run: runEvaluateCommand, usage: EVALUATE_USAGE, summary: 'the CDS Hooks response the service would give to a saved request' },
  fio2: { run: runFio2Command, usage: FIO2_USAGE, summary: 'the FiO2 a delivery device really gives' },
  gas: { run: runGasCommand, usage: GAS_USAGE, summary: 'alveolar gas, A-a gradient, P/F and the interpretation of one blood gas' },
  retime: { run: runRetimeCommand, usage: RETIME_USAGE, summary: "move a saved request's times so that it is signed now" },
  'policy validate': { run: runPolicyValidateCommand, usage: POLICY_VALIDATE_USAGE, summary: 'check a policy file as the service does at start-up' },
  'policy show': { run: runPolicyShowCommand, usage: POLICY_SHOW_USAGE, summary: 'the effective targets and thresholds as a table, for the whole policy or one unit' },
  'policy diff': { run: runPolicyDiffCommand, usage: POLICY_DIFF_USAGE, summary: 'what changed between two policy files, in clinical terms' },
  'policy schema': { run: runPolicySchemaCommand, usage: POLICY_SCHEMA_USAGE, summary: 'a JSON Schema of the policy format, for editors' },
  'policy test': { run: runPolicyTestCommand, usage: POLICY_TEST_USAGE, summary: "run the hospital's own cases against a policy" },
  simulate: { run: runSimulateCommand, usage: SIMULATE_USAGE, section: 'records', summary: "what a new policy would have changed on an export's past orders" },
  audit: { run: runAuditCommand, usage: AUDIT_USAGE, section: 'records', summary: 'oxygen audit figures per ward and overall from an export' },
  'demo-export': { run: runDemoExportCommand, usage: DEMO_EXPORT_USAGE, section: 'records', summary: 'an invented Bulk Data export of the demo hospital, of any size' },
  'config docs': { run: runConfigDocsCommand, usage: CONFIG_DOCS_USAGE, summary: 'the configuration reference: every environment variable, its default and meaning' },
  'store migrate': { run: runStoreMigrateCommand, usage: STORE_MIGRATE_USAGE, summary: "bring the store up to this version's schema, then exit (for a migration job)" },
  'validate-policy': { run: runPolicyValidateCommand, usage: POLICY_VALIDATE_USAGE, renamedTo: 'policy validate' },
};

const groupOf = (name: string): string | undefined => (name.includes(' ') ? name.split(' ')[0] : undefined);

const GROUPS: readonly string[] = [...new Set(Object.keys(COMMANDS).flatMap((name) => groupOf(name) ?? []))];

/**
 * A command list line from a usage text, for a command registered without a summary: the first
 * sentence of the description (the paragraph after the `Usage:` line), lower-cased, cut at a word
 * near 70 characters.
 */
export function summaryFromUsage(usage: string): string {
  const description = (usage.split('\n\n')[1] ?? '').replace(/\s+/g, ' ').trim();
  const sentence = description.split(/[.:;](?:\s|$)/)[0] ?? '';
  const cut = sentence.length <= 70 ? sentence : `${sentence.slice(0, sentence.lastIndexOf(' ', 70))}…`;
  return cut.charAt(0).toLowerCase() + cut.slice(1);
}

const summaryOf = (command: Command): string => command.summary ?? summaryFromUsage(command.usage);

const listed = (filter: (name: string) => boolean): [string, Command][] =>
  Object.entries(COMMANDS).filter(([name, command]) => command.renamedTo === undefined && filter(name));

function commandList(entries: readonly [string, Command][]): string {
  const width = Math.max(...listed(() => true).map(([name]) => name.length)) + 2;
  return entries.map(([name, command]) => `  ${name.padEnd(width)}${summaryOf(command)}`).join('\n');
}

function sectionOf(name: string, command: Command): Section {
  return command.section ?? (groupOf(name) === 'policy' ? 'policy' : 'orders');
}

/** The command list, built from the table so that a new command appears by being registered. */
export function topLevelUsage(): string {
  const sections = (Object.keys(SECTIONS) as Section[])
    .map((section) => [section, listed(() => true).filter(([name, c]) => sectionOf(name, c) === section)] as const)
    .filter(([, entries]) => entries.length > 0)
    .map(([section, entries]) => `${SECTIONS[section]}\n${commandList(entries)}`);
  return `${BIN}: oxygen order checks from the command line (advisory only; local policy and clinical judgement govern)

Usage: ${BIN} COMMAND [ARGUMENTS] [OPTIONS]

${sections.join('\n\n')}

Run ${BIN} help COMMAND (or ${BIN} COMMAND --help) for a command's options, and
${BIN} --version for the version of this tool.
Exit codes: 0 ran (whatever it found), 1 input could not be read or evaluated, 2 usage error or
invalid file.`;
}

function groupUsage(group: string): string {
  return `Usage: ${BIN} ${group} COMMAND [ARGUMENTS] [OPTIONS]

${commandList(listed((name) => groupOf(name) === group))}

Run ${BIN} help ${group} COMMAND for a command's options.`;
}

/** The names a person may type first: single commands, groups and help. */
const firstWords = (): string[] => [...listed((name) => groupOf(name) === undefined).map(([name]) => name), ...GROUPS, 'help'];

function suggestion(typed: string, candidates: readonly string[]): string {
  const guess = nearestWithin(typed, candidates, Math.max(2, Math.floor(typed.length / 3)));
  return guess === undefined ? '' : `; did you mean '${guess}'?`;
}

type Resolved =
  | { readonly kind: 'command'; readonly name: string; readonly command: Command; readonly args: readonly string[] }
  | { readonly kind: 'group'; readonly group: string; readonly args: readonly string[] }
  | { readonly kind: 'unknown'; readonly message: string };

function resolve(argv: readonly string[]): Resolved {
  const [first = '', second, ...rest] = argv;
  const single = COMMANDS[first];
  if (single !== undefined && groupOf(first) === undefined) {
    return { kind: 'command', name: first, command: single, args: argv.slice(1) };
  }
  if (GROUPS.includes(first)) {
    const sub = second === undefined ? undefined : COMMANDS[`${first} ${second}`];
    if (sub !== undefined && second !== undefined) {
      return { kind: 'command', name: `${first} ${second}`, command: sub, args: rest };
    }
    if (second === undefined || second.startsWith('-') || second === 'help') {
      return { kind: 'group', group: first, args: argv.slice(1) };
    }
    const subs = listed((name) => groupOf(name) === first).map(([name]) => name.split(' ')[1] ?? '');
    const guess = suggestion(second, subs).replace(/'([^']+)'/, `'${first} $1'`);
    return { kind: 'unknown', message: `unknown command '${first} ${second}'${guess}` };
  }
  // `validate` alone is most likely `policy validate`: a subcommand's own name, typed without its group.
  const inGroup = listed((name) => name.split(' ')[1] === first).map(([name]) => name);
  const guess = inGroup.length === 1 ? `; did you mean '${inGroup[0] ?? ''}'?` : suggestion(first, firstWords());
  return { kind: 'unknown', message: `unknown command '${first}'${guess}` };
}

function readVersion(io: CliIo): string | undefined {
  try {
    // Read at run time from the package.json that ships beside dist/, so the version never drifts.
    const parsed = JSON.parse(io.readFile(bundledPath('package.json'))) as { version?: unknown };
    return typeof parsed.version === 'string' ? parsed.version : undefined;
  } catch {
    return undefined;
  }
}

/** `help`, `help COMMAND`, `help policy diff`: the usage text asked for, on stdout. */
function runHelp(topic: readonly string[], io: CliIo): ExitCode {
  if (topic.length === 0) {
    io.stdout(`${topLevelUsage()}\n`);
    return 0;
  }
  const resolved = resolve(topic);
  switch (resolved.kind) {
    case 'command':
      if (resolved.args.length > 0) break;
      io.stdout(`${resolved.command.usage}\n`);
      return 0;
    case 'group':
      if (resolved.args.length > 0 && resolved.args[0] !== 'help') break;
      io.stdout(`${groupUsage(resolved.group)}\n`);
      return 0;
    case 'unknown':
      io.stderr(`${BIN} help: ${resolved.message}\nRun ${BIN} help for the list of commands.\n`);
      return 2;
  }
  io.stderr(`${BIN} help: no help on '${topic.join(' ')}'; give one command, e.g. ${BIN} help policy diff\n`);
  return 2;
}

/** Runs one command line; never exits the process itself, so tests can drive it. */
export async function runCli(argv: readonly string[], io: CliIo): Promise<ExitCode> {
  const [first] = argv;
  if (first === undefined) {
    io.stderr(`${topLevelUsage()}\n`);
    return 2;
  }
  if (first === '--help' || first === '-h') return runHelp([], io);
  if (first === 'help') return runHelp(argv.slice(1), io);
  if (first === '--version') {
    const version = readVersion(io);
    if (version === undefined) {
      io.stderr(`${BIN}: cannot read the version from package.json\n`);
      return 1;
    }
    io.stdout(`${BIN} ${version}\n`);
    return 0;
  }
  if (first.startsWith('-')) {
    io.stderr(`${BIN}: unknown option '${first}'${suggestion(first.replace(/^-+/, ''), ['help', 'version']).replace(/'(\w+)'/, '--$1')}\nRun ${BIN} help for the list of commands.\n`);
    return 2;
  }
  const resolved = resolve(argv);
  switch (resolved.kind) {
    case 'unknown':
      io.stderr(`${BIN}: ${resolved.message}\nRun ${BIN} help for the list of commands.\n`);
      return 2;
    case 'group': {
      const [option] = resolved.args;
      if (option === '--help' || option === '-h' || option === 'help') {
        io.stdout(`${groupUsage(resolved.group)}\n`);
        return 0;
      }
      const problem = option === undefined ? `${resolved.group}: give a command` : `${resolved.group}: unknown option '${option}'`;
      io.stderr(`${BIN} ${problem}\n\n${groupUsage(resolved.group)}\n`);
      return 2;
    }
    case 'command':
      break;
  }
  const { name, command, args } = resolved;
  if (command.renamedTo !== undefined) {
    io.stderr(`${BIN}: note: '${name}' is now '${command.renamedTo}'; the old name still works for now.\n`);
  }
  try {
    return await command.run(args, io);
  } catch (error) {
    if (error instanceof UsageError) {
      io.stderr(`${BIN} ${command.renamedTo ?? name}: ${error.message}\n\n${command.usage}\n`);
      return 2;
    }
    throw error;
  }
}
