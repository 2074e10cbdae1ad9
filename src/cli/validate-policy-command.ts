import { parsePolicyText } from '../policy/parse-policy.js';
import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { parseOptions } from './parse-options.js';

export const VALIDATE_POLICY_USAGE = `Usage: o2check validate-policy FILE

Checks a policy file as the service does at start-up and lists every problem with its path.
Exit 0 when valid, 1 when not.`;

export function runValidatePolicyCommand(args: readonly string[], io: CliIo): ExitCode {
  const parsed = parseOptions(args, {});
  if (parsed.values['help'] === true) {
    io.stdout(`${VALIDATE_POLICY_USAGE}\n`);
    return 0;
  }
  const [file, ...extra] = parsed.positionals;
  if (file === undefined || extra.length > 0) {
    throw new UsageError('give exactly one policy FILE');
  }
  let text: string;
  try {
    text = io.readFile(file);
  } catch {
    io.stderr(`o2check validate-policy: cannot read ${file}\n`);
    return 1;
  }
  const result = parsePolicyText(text);
  if (result.kind === 'invalid') {
    io.stdout(`${file}: not valid\n${result.problems.map((p) => `  ${p.path}: ${p.message}`).join('\n')}\n`);
    return 1;
  }
  const { policy } = result;
  io.stdout(
    `${file}: valid: ${policy.id} v${policy.version} (${policy.title})\n` +
      `  standard target ${policy.targets.standard.lowPercent}-${policy.targets.standard.highPercent} %, ` +
      `at risk of hypercapnia ${policy.targets.hypercapnicRisk.lowPercent}-${policy.targets.hypercapnicRisk.highPercent} %; ` +
      `site ${policy.site.name} at ${policy.site.altitudeM} m\n`,
  );
  return 0;
}
