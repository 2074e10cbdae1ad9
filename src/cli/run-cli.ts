import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { EVALUATE_USAGE, runEvaluateCommand } from './evaluate-command.js';
import { FIO2_USAGE, runFio2Command } from './fio2-command.js';
import { GAS_USAGE, runGasCommand } from './gas-command.js';
import { POLICY_SHOW_USAGE, runPolicyShowCommand } from './policy-show-command.js';
import { RETIME_USAGE, runRetimeCommand } from './retime-command.js';
import { runValidatePolicyCommand, VALIDATE_POLICY_USAGE } from './validate-policy-command.js';

const COMMANDS: Readonly<
  Record<string, { run: (args: readonly string[], io: CliIo) => ExitCode | Promise<ExitCode>; usage: string }>
> = {
  evaluate: { run: runEvaluateCommand, usage: EVALUATE_USAGE },
  fio2: { run: runFio2Command, usage: FIO2_USAGE },
  gas: { run: runGasCommand, usage: GAS_USAGE },
  'policy-show': { run: runPolicyShowCommand, usage: POLICY_SHOW_USAGE },
  retime: { run: runRetimeCommand, usage: RETIME_USAGE },
  'validate-policy': { run: runValidatePolicyCommand, usage: VALIDATE_POLICY_USAGE },
};

export const USAGE = `oxygen-order-checker: oxygen order checks from the command line (advisory only; local policy governs)

Commands:
  evaluate REQUEST.json     the CDS Hooks response the service would give
  fio2 --device KIND ...    the FiO2 a device delivers
  gas --fio2 F --pao2 ...   alveolar gas, A-a gradient, P/F and gas interpretation
  policy-show FILE          the effective targets and thresholds of a policy [--unit NAME]
  retime REQUEST.json       move a saved request's times so it is signed now
  validate-policy FILE      check a policy file

Run oxygen-order-checker COMMAND --help for a command's options.`;

/** Runs one command line; never exits the process itself, so tests can drive it. */
export async function runCli(argv: readonly string[], io: CliIo): Promise<ExitCode> {
  const [name, ...args] = argv;
  if (name === undefined || name === '--help' || name === '-h' || name === 'help') {
    io.stdout(`${USAGE}\n`);
    return name === undefined ? 2 : 0;
  }
  const command = COMMANDS[name];
  if (command === undefined) {
    io.stderr(`oxygen-order-checker: unknown command '${name}'\n\n${USAGE}\n`);
    return 2;
  }
  try {
    return await command.run(args, io);
  } catch (error) {
    if (error instanceof UsageError) {
      io.stderr(`oxygen-order-checker ${name}: ${error.message}\n\n${command.usage}\n`);
      return 2;
    }
    throw error;
  }
}
