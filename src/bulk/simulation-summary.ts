import type { PolicyLabel, SimulationReport } from './simulate.js';
import { CHANGE_KINDS, SKIP_REASONS, type ChangeKind, type SkipReason } from './simulation-tally.js';

/**
 * The simulation's plain-text summary (what `simulate` prints) and its JSON form. No patient names
 * or identifiers beyond order references; wards as the encounters name them. Pure.
 */

export const CHANGE_WORDS: Readonly<Record<ChangeKind, string>> = {
  added: 'advice added',
  removed: 'advice removed',
  'indicator-changed': 'indicator changed',
  replaced: 'advice replaced',
};

export const SIMULATION_CAUTION =
  'Advisory only: a replay shows what the service would have advised, not what happened to patients; ' +
  'the data are what the export holds (pulse oximetry has its limits), and local policy and clinical ' +
  'judgement decide.';

const signed = (n: number): string => (n > 0 ? `+${n}` : String(n));
const range = (r: { lowPercent: number; highPercent: number }): string => `${r.lowPercent}–${r.highPercent} %`;

function policyLine(name: string, p: PolicyLabel): string {
  return `${name} ${p.id} v${p.version} (${p.file}, sha256 ${p.contentHash.slice(0, 12)}): standard ${range(p.standardRange)}, hypercapnic risk ${range(p.hypercapnicRiskRange)}`;
}

function pad(text: string, width: number): string {
  return text.length >= width ? text : text + ' '.repeat(width - text.length);
}

function padLeft(text: string, width: number): string {
  return text.length >= width ? text : ' '.repeat(width - text.length) + text;
}

/** How many examples of each kind of change the text shows (the JSON and HTML keep all the tally holds). */
export const SUMMARY_EXAMPLES_PER_KIND = 2;

export function formatSimulationSummary(report: SimulationReport, exportDir: string): string {
  const t = report.tally;
  const skipped = t.ordersSeen - t.ordersEvaluated;
  const lines: string[] = [
    `Replayed the oxygen orders of ${exportDir}, each with the record as it stood when it was signed.`,
    policyLine('Baseline:', report.baseline),
    policyLine('New:     ', report.proposed),
    '',
    `Orders: ${t.ordersSeen} in the export, ${t.ordersEvaluated} replayed, ${skipped} skipped.`,
  ];
  for (const [reason, count] of Object.entries(t.skipped) as [SkipReason, number][]) {
    if (count > 0) lines.push(`  skipped ${count}: ${SKIP_REASONS[reason]}`);
  }
  const share = t.ordersEvaluated === 0 ? 0 : (100 * t.ordersChanged) / t.ordersEvaluated;
  lines.push(
    `Advisories: ${t.advisories.baseline} under the baseline, ${t.advisories.proposed} under the new policy (${signed(t.advisories.proposed - t.advisories.baseline)}).`,
    `Orders whose advice changed: ${t.ordersChanged} of ${t.ordersEvaluated} (${share.toFixed(1)} %): ${CHANGE_KINDS.map((k) => `${CHANGE_WORDS[k]} ${t.changedByKind[k]}`).join(', ')}.`,
    '',
    'Advisories by rule and indicator:',
  );
  const width = Math.max(24, ...t.byRuleIndicator.map((r) => r.ruleId.length + 2));
  lines.push(`  ${pad('rule', width)}${pad('indicator', 10)}${padLeft('baseline', 9)}${padLeft('new', 7)}${padLeft('change', 8)}`);
  for (const r of t.byRuleIndicator) {
    lines.push(`  ${pad(r.ruleId, width)}${pad(r.indicator, 10)}${padLeft(String(r.baseline), 9)}${padLeft(String(r.proposed), 7)}${padLeft(signed(r.proposed - r.baseline), 8)}`);
  }
  const kindsWithExamples = CHANGE_KINDS.filter((k) => t.examples[k].length > 0);
  if (kindsWithExamples.length > 0) {
    lines.push('', `Examples of changed advice, the first ${SUMMARY_EXAMPLES_PER_KIND} of each kind (order, ward, SpO2 at order time; before → after):`);
  }
  for (const kind of kindsWithExamples) {
    lines.push(`  ${CHANGE_WORDS[kind]}:`);
    for (const e of t.examples[kind].slice(0, SUMMARY_EXAMPLES_PER_KIND)) {
      const spo2 = e.spo2Percent === undefined ? 'no current SpO2' : `SpO2 ${e.spo2Percent} %`;
      lines.push(`    ${e.orderReference} (${e.authoredOn}), ${e.ward ?? 'ward not recorded'}, ${spo2}`);
      lines.push(`      before: ${e.before.join(', ') || 'no advisories'}`);
      lines.push(`      after:  ${e.after.join(', ') || 'no advisories'}`);
    }
  }
  if (report.malformedLines.count > 0) {
    lines.push('', `Malformed NDJSON lines skipped: ${report.malformedLines.count}.`);
  }
  lines.push('', SIMULATION_CAUTION);
  return `${lines.join('\n')}\n`;
}

/** The `--json` document: the report, tagged with its format, and the export it came from. */
export function simulationJson(report: SimulationReport, exportDir: string): Readonly<Record<string, unknown>> {
  return { format: 'oxygen-order-checker/simulation', formatVersion: 1, exportDir, ...report, caution: SIMULATION_CAUTION };
}
