import { resolve } from 'node:path';
import { SHORT_HASH_LENGTH } from '../cds/build-card.js';
import { ENV_DEFAULTS } from '../config/env-config.js';
import { loadPolicyAndCards, type LoadProblem } from '../config/load-files.js';
import { notYetInEffectWarning } from '../policy/effective-from.js';
import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { count, describeProblem, invalidReport, readPolicyFile } from './policy-file.js';
import { parseOptions } from './parse-options.js';

export const POLICY_VALIDATE_USAGE = `Usage: oxygen-order-checker policy validate FILE [--cards DIR]

Checks a policy file as the service does at start-up: the format, then the checks that protect
patients (ranges, critical thresholds, rule ids, critical rules switched off or lowered). Lists every
problem with its line, column and path, what is wrong and how to fix it; warnings and the committee's
acknowledgements are shown either way. A valid file is then loaded with the card files, as the
service loads it, so the policy's card-wording folder and override reasons are checked too.
  --cards    card template folder the service uses (default: the bundled cards/)
Exit 0 when valid (warnings allowed), 1 when the file cannot be read, 2 when it is not valid.`;

/** A card-side problem (local wording folder, offered reasons) as `file:line:column: error: path: message`. */
function describeLoadProblem(p: LoadProblem): string {
  const where = p.line === undefined ? p.file : `${p.file}:${p.line}:${p.column ?? 1}`;
  return `${where}: error: ${p.path}: ${p.message}${p.fix === undefined ? '' : `\n    fix: ${p.fix}`}`;
}

export async function runPolicyValidateCommand(args: readonly string[], io: CliIo): Promise<ExitCode> {
  const parsed = parseOptions(args, { cards: { type: 'string' } });
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
  // The policy file alone is valid; the service also loads the cards it words or offers reasons on.
  const cardsOption = parsed.values['cards'];
  const cardsDir = typeof cardsOption === 'string' ? resolve(cardsOption) : ENV_DEFAULTS.OXYGEN_CHECKER_CARDS_DIR;
  const loaded = await loadPolicyAndCards({ policyPath: resolve(file), cardsDir });
  if (loaded.kind === 'invalid') {
    io.stdout(
      `${file}: not valid with its cards: ${count(loaded.problems.length, 'error')}\n` +
        loaded.problems.map((p) => `${describeLoadProblem(p)}\n`).join(''),
    );
    return 2;
  }
  const { policy, acknowledgements } = result;
  // As the service warns at start: a policy may be loaded before its date, but not by surprise.
  const early = notYetInEffectWarning(policy, io.now());
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
      (early === undefined ? '' : `  note: ${early}\n`) +
      result.warnings.map((p) => `${describeProblem(file, 'warning', p)}\n`).join(''),
  );
  return 0;
}
