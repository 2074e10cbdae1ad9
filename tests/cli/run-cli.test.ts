import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { summaryFromUsage } from '../../src/cli/run-cli.js';
import { runCommandLine } from './cli-harness.js';

/** Every command as typed, with its options as its usage line gives them. */
const COMMANDS: readonly (readonly string[])[] = [
  ['evaluate'],
  ['fio2'],
  ['gas'],
  ['retime'],
  ['policy', 'validate'],
  ['policy', 'diff'],
  ['policy', 'schema'],
  ['policy', 'show'],
  ['policy', 'test'],
  ['simulate'],
  ['audit'],
  ['demo-export'],
  ['config', 'docs'],
];

/** The options named in a usage text's synopsis: the `Usage:` line and the lines that continue it. */
function synopsisOptions(usage: string): string[] {
  const synopsis = usage.split('\n\n')[0] ?? '';
  return [...new Set([...synopsis.matchAll(/--([a-z][a-z0-9-]*)/g)].map((m) => m[1] ?? ''))];
}

describe('oxygen-order-checker, the command line as a whole', () => {
  it('lists every command in its help, grouped, and exits 0; with no command it shows the same on stderr and exits 2', async () => {
    const help = await runCommandLine(['help']);
    expect(help.code).toBe(0);
    for (const command of COMMANDS) expect(help.stdout).toContain(`  ${command.join(' ')} `);
    expect(help.stdout).toContain("Write and check the local policy (the hospital's oxygen team):");
    expect(help.stdout).not.toContain('validate-policy');
    expect((await runCommandLine(['--help'])).stdout).toBe(help.stdout);
    const bare = await runCommandLine([]);
    expect(bare.code).toBe(2);
    expect(bare.stderr).toBe(help.stdout);
  });

  it.each(COMMANDS.map((c) => [c.join(' '), c]))('help %s and %s --help give its usage, which names it as typed', async (_name, command) => {
    const viaHelp = await runCommandLine(['help', ...command]);
    const viaOption = await runCommandLine([...command, '--help']);
    expect(viaHelp.code).toBe(0);
    expect(viaOption.code).toBe(0);
    expect(viaHelp.stdout).toBe(viaOption.stdout);
    expect(viaHelp.stdout.startsWith(`Usage: oxygen-order-checker ${command.join(' ')}`)).toBe(true);
  });

  it('lists the policy group for `policy --help` and `help policy`; `policy` alone is a usage error', async () => {
    const group = await runCommandLine(['policy', '--help']);
    expect(group.code).toBe(0);
    expect(group.stdout).toMatch(/^Usage: oxygen-order-checker policy COMMAND/);
    for (const sub of ['validate', 'diff', 'schema']) expect(group.stdout).toContain(`  policy ${sub} `);
    expect((await runCommandLine(['help', 'policy'])).stdout).toBe(group.stdout);
    const bare = await runCommandLine(['policy']);
    expect(bare.code).toBe(2);
    expect(bare.stderr).toContain('oxygen-order-checker policy: give a command');
  });

  it('prints the version from package.json', async () => {
    const { version } = JSON.parse(readFileSync(new URL('../../package.json', import.meta.url), 'utf8')) as { version: string };
    const run = await runCommandLine(['--version']);
    expect(run.code).toBe(0);
    expect(run.stdout).toBe(`oxygen-order-checker ${version}\n`);
  });

  describe('a slip answered with the nearest valid name, exit 2', () => {
    it.each([
      [['evalute', 'x.json'], "unknown command 'evalute'; did you mean 'evaluate'?"],
      [['fi02'], "unknown command 'fi02'; did you mean 'fio2'?"],
      [['retiem'], "unknown command 'retiem'; did you mean 'retime'?"],
      [['polcy', 'validate'], "unknown command 'polcy'; did you mean 'policy'?"],
      [['policy', 'valdiate', 'x.yaml'], "unknown command 'policy valdiate'; did you mean 'policy validate'?"],
      [['policy', 'dif'], "unknown command 'policy dif'; did you mean 'policy diff'?"],
      [['validate', 'x.yaml'], "unknown command 'validate'; did you mean 'policy validate'?"],
      [['schema'], "unknown command 'schema'; did you mean 'policy schema'?"],
      [['--verison'], "unknown option '--verison'; did you mean --version?"],
      [['help', 'policy', 'diffs'], "unknown command 'policy diffs'; did you mean 'policy diff'?"],
    ])('%j', async (argv, message) => {
      const run = await runCommandLine(argv);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain(message);
      expect(run.stdout).toBe('');
    });

    it('names no command when none is near', async () => {
      const run = await runCommandLine(['frobnicate']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain("unknown command 'frobnicate'\n");
    });

    // policy validate takes no options; every other command does.
    const withOptions = COMMANDS.filter((c) => c.join(' ') !== 'policy validate');
    it.each(withOptions.map((c) => [c.join(' '), c]))('%s: each option of its synopsis, with two letters swapped, gets "did you mean"', async (_name, command) => {
      const usage = (await runCommandLine([...command, '--help'])).stdout;
      const options = synopsisOptions(usage);
      expect(options.length).toBeGreaterThan(0);
      for (const option of options.filter((o) => o.length >= 3)) {
        const slip = `${option.charAt(1)}${option.charAt(0)}${option.slice(2)}`;
        const run = await runCommandLine([...command, `--${slip}`, 'x']);
        expect(run.code, `--${slip}`).toBe(2);
        expect(run.stderr).toContain(`oxygen-order-checker ${command.join(' ')}: unknown option '--${slip}'; did you mean --${option}?`);
      }
    });

    it('lists the options when an unknown one is near none of them', async () => {
      const run = await runCommandLine(['policy', 'diff', 'a.yaml', 'b.yaml', '--colour']);
      expect(run.code).toBe(2);
      expect(run.stderr).toContain("unknown option '--colour'; the options are --json, --help");
    });
  });

  it('lists a command registered without a summary by the first sentence of its usage text', () => {
    expect(summaryFromUsage('Usage: oxygen-order-checker policy show FILE [--unit NAME]\n\nShows the effective targets of a policy file as a table. Exit 0.')).toBe(
      'shows the effective targets of a policy file as a table',
    );
    const long = summaryFromUsage(
      'Usage: oxygen-order-checker x\n\nReplays a FHIR Bulk Data export under two policies and reports every order whose advice\nchanged, with examples: more.',
    );
    expect(long).toBe('replays a FHIR Bulk Data export under two policies and reports every…');
  });
});
