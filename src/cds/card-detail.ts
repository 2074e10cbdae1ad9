import type { Assessment } from '../core/assessment/types.js';
import { formatFio2Range, formatNumber } from '../core/assessment/format.js';
import type { Policy } from '../core/policy.js';
import type { Computation, Facts, Finding, Measured } from '../core/types.js';
import { escapeMarkdown, type BasedOnKind } from './card-templates.js';
import { cardClock, type CardClock } from './card-time.js';
import { describeOrderAsRead, findingSourceKeys, gasValues, referenceLabel, reportedValue } from './card-workings.js';
import { oncePerPolicy } from './once-per-policy.js';

/**
 * The compact detail of a card, short enough to act on in an EHR's side panel: the rule's own text,
 * a short "Based on" list of only the inputs the card's template names (each with its local time and
 * how long ago), one line of arithmetic per key computation, the sources as labels, and the policy's
 * cautions in one paragraph. The full inputs and workings are in `renderWorkings` (card-workings.ts).
 * Of these only the rule text and the arithmetic are the card's own: the inputs are the same for every
 * card of one assessment, the cautions for every card of one policy, so each is built once.
 */

/** At most this many computations are shown on the card, one line each; the rest are in the workings. */
export const MAX_ARITHMETIC_LINES = 3;

function measuredLine(label: string, measured: Measured | undefined, clock: CardClock): string {
  return measured === undefined
    ? `${label}: no current reading`
    : `${label} ${reportedValue(measured)} ${clock.when(measured.at)}`;
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
          : [`Blood gas (${gas.specimen}) ${clock.when(gas.at)}: ${gasValues(gas)}`],
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
  // A rule cites the same few keys on every card, so the line is kept per policy and list of keys.
  const keys = findingSourceKeys(finding);
  const lines = sourcesLinesOf(policy);
  const joined = keys.join('\n');
  let line = lines.get(joined);
  if (line === undefined) {
    line = buildSourcesLine(keys, policy);
    lines.set(joined, line);
  }
  return line;
}

const sourcesLinesOf = oncePerPolicy(() => new Map<string, string>());

function buildSourcesLine(keys: readonly string[], policy: Policy): string {
  const labels = keys.filter((key) => key !== 'local-policy').map((key) => referenceLabel(key, policy));
  return [...new Set(labels), `local policy ${policy.id} v${policy.version}`].map(escapeMarkdown).join(' · ');
}

/** The policy's cautions (advisory only, pulse oximetry limits, any local lines) as one paragraph. */
export function cautionsParagraph(policy: Policy): string {
  return cautionsOnce(policy);
}

const cautionsOnce = oncePerPolicy((policy) => `_${policy.cautions.map((line) => escapeMarkdown(line.trim())).join(' ')}_`);

/**
 * The end of every card's detail, its sources line and the cautions: made of the policy and the keys
 * the finding cites alone, so it is put together once per policy and list of keys.
 */
function sourcesAndCautions(finding: Finding, policy: Policy): string {
  const byKeys = endingsOf(policy);
  const joined = findingSourceKeys(finding).join('\n');
  let ending = byKeys.get(joined);
  if (ending === undefined) {
    ending = `**Sources:** ${sourcesLine(finding, policy)}\n\n${cautionsParagraph(policy)}`;
    byKeys.set(joined, ending);
  }
  return ending;
}

const endingsOf = oncePerPolicy(() => new Map<string, string>());

/** What one card adds to the parts its call shares: its rule text, inputs named, finding and assessment. */
export interface CardDetailInput {
  /** The template's detail, already rendered with the finding's values. */
  readonly ruleText: string;
  readonly basedOn: readonly BasedOnKind[];
  readonly finding: Finding;
  readonly assessment: Assessment;
}

export interface CompactDetailInput extends CardDetailInput {
  readonly facts: Facts;
  readonly policy: Policy;
  readonly now: Date;
}

/** Renders the compact detail of each card of one call; see {@link prepareCompactDetail}. */
export type CompactDetailRenderer = (input: CardDetailInput) => string;

/**
 * {@link compactDetail} for every card of one call, with the same output: each assessment's "Based on"
 * lines are built and escaped once, whichever cards list them.
 */
export function prepareCompactDetail(facts: Facts, policy: Policy, clock: CardClock): CompactDetailRenderer {
  // Each input's lines as the Markdown list items they are shown as ('' when it has none), built and
  // escaped once per assessment, whichever cards list the input.
  const itemsByAssessment = new Map<Assessment, Map<BasedOnKind, string>>();
  const inputItems = (kind: BasedOnKind, assessment: Assessment): string => {
    let byKind = itemsByAssessment.get(assessment);
    if (byKind === undefined) {
      byKind = new Map();
      itemsByAssessment.set(assessment, byKind);
    }
    let items = byKind.get(kind);
    if (items === undefined) {
      items = basedOnLines(kind, facts, assessment, clock)
        .map((line) => `- ${escapeMarkdown(line)}`)
        .join('\n');
      byKind.set(kind, items);
    }
    return items;
  };
  // Cards of one template list the same inputs (its `basedOn`, one array for every card), and cards of
  // one assessment show the same lines for them: the list is put together once per assessment and array,
  // as the Markdown list it starts the "Based on" block with ('' when it lists nothing). An input the
  // template names twice is shown once.
  const listsByAssessment = new Map<Assessment, Map<readonly BasedOnKind[], string>>();
  const inputList = (basedOn: readonly BasedOnKind[], assessment: Assessment): string => {
    let byBasedOn = listsByAssessment.get(assessment);
    if (byBasedOn === undefined) {
      byBasedOn = new Map();
      listsByAssessment.set(assessment, byBasedOn);
    }
    let list = byBasedOn.get(basedOn);
    if (list === undefined) {
      list = [...new Set(basedOn)]
        .map((kind) => inputItems(kind, assessment))
        .filter((items) => items !== '')
        .join('\n');
      byBasedOn.set(basedOn, list);
    }
    return list;
  };
  // The blocks (rule text, "Based on", sources, cautions) are joined by a blank line; the card's own
  // parts (its arithmetic) are added to the shared ones as text, with no list built per card.
  return (input) => {
    let list = inputList(input.basedOn, input.assessment);
    const computations = input.finding.computations;
    const shown = keyComputations(computations);
    for (const computation of shown) {
      list += `${list === '' ? '' : '\n'}- ${arithmeticLine(computation)}`;
    }
    if (computations.length > shown.length) {
      list += `${list === '' ? '' : '\n'}- ${computations.length - shown.length} earlier step(s) not shown`;
    }
    const basedOnBlock = list === '' ? '' : `\n\n**Based on:**\n${list}`;
    return `${input.ruleText.trim()}${basedOnBlock}\n\n${sourcesAndCautions(input.finding, policy)}`;
  };
}

/** The card's detail (GitHub-Flavored Markdown). Pure. */
export function compactDetail(input: CompactDetailInput): string {
  return prepareCompactDetail(input.facts, input.policy, cardClock(input.now, input.policy.site.timeZone))(input);
}
