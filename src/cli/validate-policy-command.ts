import { parsePolicyText, type PolicyProblem } from '../policy/parse-policy.js';
import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { parseOptions } from './parse-options.js';

export const VALIDATE_POLICY_USAGE = `Usage: oxygen-order-checker validate-policy FILE

Checks a policy file as the service does at start-up: the format, then the checks that protect
patients (ranges, critical thresholds, rule ids, critical rules switched off or lowered). Lists every
problem with its line, column and path, what is wrong and how to fix it; warnings are shown either way.
Exit 0 when valid (warnings allowed), 1 when not.`;

function describe(file: string, level: 'error' | 'warning', p: PolicyProblem): string {
  const where = p.line === undefined ? file : `${file}:${p.line}:${p.column ?? 1}`;
  return `${where}: ${level}: ${p.path}: ${p.message}${p.fix === undefined ? '' : `\n    fix: ${p.fix}`}`;
}

const count = (n: number, word: string): string => `${n} ${word}${n === 1 ? '' : 's'}`;

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
    io.stderr(`oxygen-order-checker validate-policy: cannot read ${file}\n`);
    return 1;
  }
  const result = parsePolicyText(text);
  const warnings = result.warnings.map((p) => `${describe(file, 'warning', p)}\n`).join('');
  if (result.kind === 'invalid') {
    io.stdout(
      `${file}: not valid: ${count(result.problems.length, 'error')}, ${count(result.warnings.length, 'warning')}\n` +
        result.problems.map((p) => `${describe(file, 'error', p)}\n`).join('') +
        warnings,
    );
    return 1;
  }
  const { policy, acknowledgements } = result;
  const acknowledged = acknowledgements.map(
    (a) =>
      `  acknowledged: ${a.ruleId} ${a.change}: ${a.reason}` +
      `${a.by === undefined ? '' : `; by ${a.by}`}${a.date === undefined ? '' : `, ${a.date}`}\n`,
  );
  io.stdout(
    `${file}: valid: ${policy.id} v${policy.version} (${policy.title})` +
      `${result.warnings.length > 0 ? `, ${count(result.warnings.length, 'warning')}` : ''}\n` +
      `  standard target ${policy.targets.standard.lowPercent}-${policy.targets.standard.highPercent} %, ` +
      `at risk of hypercapnia ${policy.targets.hypercapnicRisk.lowPercent}-${policy.targets.hypercapnicRisk.highPercent} %; ` +
      `site ${policy.site.name} at ${policy.site.altitudeM} m\n` +
      acknowledged.join('') +
      warnings,
  );
  return 0;
}
