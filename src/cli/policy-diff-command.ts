import { diffPolicies, policyDiffText } from '../policy/policy-diff.js';
import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { invalidReport, readPolicyFile } from './policy-file.js';
import { parseOptions } from './parse-options.js';

export const POLICY_DIFF_USAGE = `Usage: oxygen-order-checker policy diff OLD NEW [--json]

Shows what changed from the policy file OLD (e.g. the one in use) to NEW, in clinical terms, grouped by
heading: the date it applies from, target ranges, unit overrides, who is at risk of hypercapnic
respiratory failure, thresholds with their units, freshness windows, rules switched on or off,
indicators raised or lowered, acknowledgements, the devices stocked and their Venturi valves, what the
cards cite, card wording and override reasons, site, population and special conditions; then any
other change by its path. The identity (id, version and
content hash) is shown too, so two files that differ only in their bytes are still told apart.
  --json  print the changes as JSON for scripts
It is a report: exit 0 whenever both files are valid, changed or not; 1 when a file cannot be read;
2 when either file is not valid (its problems are listed, as policy validate lists them).`;

export function runPolicyDiffCommand(args: readonly string[], io: CliIo): ExitCode {
  const parsed = parseOptions(args, { json: { type: 'boolean' } });
  if (parsed.values['help'] === true) {
    io.stdout(`${POLICY_DIFF_USAGE}\n`);
    return 0;
  }
  const [oldFile, newFile, ...extra] = parsed.positionals;
  if (oldFile === undefined || newFile === undefined || extra.length > 0) {
    throw new UsageError('give two policy files: OLD then NEW');
  }
  const reads = [readPolicyFile(oldFile, io), readPolicyFile(newFile, io)];
  const unreadable = reads.filter((r) => r.kind === 'unreadable');
  if (unreadable.length > 0) {
    io.stderr(unreadable.map((r) => `oxygen-order-checker policy diff: cannot read ${r.file}\n`).join(''));
    return 1;
  }
  const [before, after] = reads;
  if (before?.kind !== 'read' || after?.kind !== 'read') return 1;
  if (before.parse.kind === 'invalid' || after.parse.kind === 'invalid') {
    const reports = [before, after].flatMap((r) => (r.parse.kind === 'invalid' ? [invalidReport(r.file, r.parse)] : []));
    io.stderr(`oxygen-order-checker policy diff: cannot compare, a file is not valid\n${reports.join('')}`);
    return 2;
  }
  const diff = diffPolicies(
    { policy: before.parse.policy, contentHash: before.contentHash, acknowledgements: before.parse.acknowledgements },
    { policy: after.parse.policy, contentHash: after.contentHash, acknowledgements: after.parse.acknowledgements },
  );
  io.stdout(parsed.values['json'] === true ? `${JSON.stringify({ ...diff, clinicalChange: diff.changes.length > 0 }, null, 2)}\n` : policyDiffText(diff));
  return 0;
}
