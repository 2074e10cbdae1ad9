import { SHORT_HASH_LENGTH } from '../cds/build-card.js';
import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { count, describeProblem, invalidReport, readPolicyFile } from './policy-file.js';
import { parseOptions } from './parse-options.js';

export const POLICY_VALIDATE_USAGE = `Usage: oxygen-order-checker policy validate FILE

Checks a policy file as the service does at start-up: the format, then the checks that protect
patients (ranges, critical thresholds, rule ids, critical rules switched off or lowered). Lists every
problem with its line, column and path, what is wrong and how to fix it; warnings and the committee's
acknowledgements are shown either way.
Exit 0 when valid (warnings allowed), 1 when the file cannot be read, 2 when it is not valid.`;

export function runPolicyValidateCommand(args: readonly string[], io: CliIo): ExitCode {
  const parsed = parseOptions(args, {});
  if (parsed.values['help'] === true) {
    io.stdout(`${POLICY_VALIDATE_USAGE}\n`);
    return 0;
  }
  const [file, ...extra] = parsed.positionals;
  if (file === undefined || extra.length > 0) {
    throw new UsageError('give exactly one policy FILE');
  }
  const read = readPolicyFile(file, io);
  if (read.kind === 'unreadable') {
    io.stderr(`oxygen-order-checker policy validate: cannot read ${file}\n`);
    return 1;
  }
  const result = read.parse;
  if (result.kind === 'invalid') {
    // Exit 2, as for any configuration error: the service would refuse to start on this file.
    io.stdout(invalidReport(file, result));
    return 2;
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
      `  content hash ${read.contentHash.slice(0, SHORT_HASH_LENGTH)} (as cards show it)\n` +
      acknowledged.join('') +
      result.warnings.map((p) => `${describeProblem(file, 'warning', p)}\n`).join(''),
  );
  return 0;
}
