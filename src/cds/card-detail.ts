import type { Assessment } from '../core/assessment/types.js';
import { formatFio2Range, formatNumber } from '../core/assessment/format.js';
import type { Policy } from '../core/policy.js';
import type { Computation, Facts, Finding, Measured } from '../core/types.js';
import { escapeMarkdown, type BasedOnKind } from './card-templates.js';
import { formatWhen } from './card-time.js';
import {
  describeOrderAsRead,
  findingSourceKeys,
  gasValues,
  referenceLabel,
  reportedValue,
  type CardClock,
} from './card-workings.js';

/**
 * The compact detail of a card, short enough to act on in an EHR's side panel: the rule's own text,
 * a short "Based on" list of only the inputs the card's template names (each with its local time and
 * how long ago), one line of arithmetic per key computation, the sources as labels, and the policy's
 * cautions in one paragraph. The full inputs and workings are in `renderWorkings` (card-workings.ts).
 */


/** At most this many computations are shown on the card, one line each; the rest are in the workings. */
export const MAX_ARITHMETIC_LINES = 3;

function measuredLine(label: string, measured: Measured | undefined, clock: CardClock): string {
  return measured === undefined
    ? `${label}: no current reading`
    : `${label} ${reportedValue(measured)} ${formatWhen(measured.at, clock.now, clock.timeZone)}`;
}

function basedOnLines(kind: BasedOnKind, facts: Facts, assessment: Assessment, clock: CardClock): string[] {
  const { current } = assessment;
  switch (kind) {
    case 'order':
      return assessment.order === undefined ? [] : [`Order: ${describeOrderAsRead(assessment.order)}`];
    case 'delivered-fio2':
      return assessment.delivery.kind === 'ok'
        ? [`Delivered FiO2 (estimate): ${formatFio2Range(assessment.delivery.value.fio2)}`]
        : [];
    case 'spo2':
      return [measuredLine('SpO2', current.spo2, clock)];
    case 'resp-rate':
      return [measuredLine('Respiratory rate', current.respRate, clock)];
    case 'recorded-oxygen': {
      const lines: string[] = [];
      const fio2 = facts.fio2Fraction[0];
      const flow = facts.o2FlowLPerMin[0];
      if (fio2 !== undefined) lines.push(measuredLine('Recorded FiO2', fio2, clock));
      if (flow !== undefined) lines.push(measuredLine('Recorded oxygen flow', flow, clock));
      return lines;
    }
    case 'blood-gas': {
      const gases = [current.gas, current.arterialGas].filter((g, i, all) => g !== undefined && all.indexOf(g) === i);
      if (gases.length === 0) {
        return ['Blood gas: none current'];
      }
      return gases.flatMap((gas) =>
        gas === undefined
          ? []
          : [`Blood gas (${gas.specimen}) ${formatWhen(gas.at, clock.now, clock.timeZone)}: ${gasValues(gas)}`],
      );
    }
    case 'haemoglobin':
      return [measuredLine('Haemoglobin', current.haemoglobin, clock)];
    case 'age':
      return facts.patient.ageYears === undefined ? ['Age: not known'] : [`Age ${formatNumber(facts.patient.ageYears, 0)} years`];
    case 'hypercapnic-risk': {
      const reasons = assessment.hypercapnicRisk.reasons.map((reason) => reason.evidence);
      return [
        reasons.length === 0
          ? 'Risk of hypercapnic respiratory failure: none documented'
          : `Risk of hypercapnic respiratory failure: ${reasons.join('; ')}`,
      ];
    }
  }
}

/** "P/F ratio: 55.5 / 0.26 = 210 mmHg": the patient's numbers and the result, without the formula. */
export function arithmeticLine(computation: Computation): string {
  return `${escapeMarkdown(computation.name)}: ${escapeMarkdown(computation.substituted)} → **${escapeMarkdown(computation.result)}**`;
}

/**
 * The key computations: the last ones a rule made (intermediate steps such as the barometric
 * pressure come first, the results the advice rests on last), at most {@link MAX_ARITHMETIC_LINES}.
 */
function keyComputations(computations: readonly Computation[]): readonly Computation[] {
  return computations.slice(-MAX_ARITHMETIC_LINES);
}

/** "BTS 2017 · Jones 1984 · local policy based-on-bts-2017 v1.0.0". */
export function sourcesLine(finding: Finding, policy: Policy): string {
  const labels = findingSourceKeys(finding)
    .filter((key) => key !== 'local-policy')
    .map((key) => referenceLabel(key, policy));
  return [...new Set(labels), `local policy ${policy.id} v${policy.version}`].map(escapeMarkdown).join(' · ');
}

/** The policy's cautions (advisory only, pulse oximetry limits, any local lines) as one paragraph. */
export function cautionsParagraph(policy: Policy): string {
  return `_${policy.cautions.map((line) => escapeMarkdown(line.trim())).join(' ')}_`;
}

export interface CompactDetailInput {
  /** The template's detail, already rendered with the finding's values. */
  readonly ruleText: string;
  readonly basedOn: readonly BasedOnKind[];
  readonly finding: Finding;
  readonly facts: Facts;
  readonly assessment: Assessment;
  readonly policy: Policy;
  readonly now: Date;
}

/** The card's detail (GitHub-Flavored Markdown). Pure. */
export function compactDetail(input: CompactDetailInput): string {
  const clock: CardClock = { now: input.now, timeZone: input.policy.site.timeZone };
  const inputs = [...new Set(input.basedOn)].flatMap((kind) =>
    basedOnLines(kind, input.facts, input.assessment, clock).map(escapeMarkdown),
  );
  const computations = input.finding.computations;
  const shown = keyComputations(computations);
  const arithmetic = shown.map(arithmeticLine);
  if (computations.length > shown.length) {
    arithmetic.push(`${computations.length - shown.length} earlier step(s) not shown`);
  }
  const list = [...inputs, ...arithmetic];
  const blocks = [
    input.ruleText.trim(),
    ...(list.length === 0 ? [] : [`**Based on:**\n${list.map((line) => `- ${line}`).join('\n')}`]),
    `**Sources:** ${sourcesLine(input.finding, input.policy)}`,
    cautionsParagraph(input.policy),
  ];
  return blocks.join('\n\n');
}
