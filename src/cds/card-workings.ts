import type { Assessment } from '../core/assessment/types.js';
import { formatFio2Range, formatFlow, formatGasValue, formatMmHg, formatNumber, formatRange } from '../core/assessment/format.js';
import { DEVICE_MODELS } from '../core/devices/index.js';
import type { Policy } from '../core/policy.js';
import type { BloodGas, Computation, DeviceKind, Facts, Finding, Measured, OxygenOrder, SetAsideNote } from '../core/types.js';
import { escapeMarkdown } from './card-templates.js';
import { cardClock, type CardClock } from './card-time.js';
import { oncePerPolicy } from './once-per-policy.js';

/**
 * The full workings behind one card, so nothing the advice rests on is lost although the card itself
 * stays short: every input (with its local time and FHIR reference), each calculation, what was set
 * aside, what could not be had, the full sources and every caution of the policy. The CLI shows it
 * (`oxygen-order-checker evaluate --workings`); the card's advisory page can reuse it. All data is escaped for
 * GitHub-Flavored Markdown here; only the fixed wording of this file is Markdown.
 */

export interface DetailSection {
  readonly heading: string;
  readonly lines: readonly string[];
}

export type { CardClock };

/** The device registry's plain label, e.g. "Nasal cannula". */
export function deviceLabel(kind: DeviceKind): string {
  return DEVICE_MODELS[kind].label;
}

const UNIT_DISPLAY: Readonly<Record<string, string>> = { 'mm[Hg]': 'mmHg', '%': '%', '1': '' };

/** A measured value as the source reported it: "93 %", "22/min", "2 L/min". */
export function reportedValue(measured: Measured): string {
  const unit = UNIT_DISPLAY[measured.reported.unit] ?? measured.reported.unit;
  // "22/min" but "93 %" and "2 L/min" (SI: a space before a unit symbol, none before a slash).
  if (unit === '' || unit.startsWith('/')) {
    return `${measured.reported.value}${unit}`;
  }
  return `${measured.reported.value} ${unit}`;
}

function withReference(line: string, reference: string | undefined): string {
  return reference === undefined ? line : `${line} (${reference})`;
}

function measuredLine(label: string, measured: Measured | undefined, clock: CardClock): string | undefined {
  return measured === undefined
    ? undefined
    : withReference(`${label} ${reportedValue(measured)} ${clock.when(measured.at)}`, measured.reference);
}

/** "Nasal cannula, 3 L/min, target 94–98 %": the order as read, without its reference. */
export function describeOrderAsRead(order: OxygenOrder): string {
  const parts = [order.device === undefined ? (order.deviceText ?? 'device not stated') : deviceLabel(order.device)];
  if (order.flowLPerMin !== undefined) {
    parts.push(formatFlow(order.flowLPerMin));
  }
  if (order.setFio2Fraction !== undefined) {
    parts.push(`set FiO2 ${order.setFio2Fraction.toFixed(2)}`);
  }
  parts.push(
    order.target === undefined
      ? 'no target SpO2 range stated'
      : `target ${formatRange(order.target)}${order.target.readFrom === 'text' ? ' (read from the order text)' : ''}`,
  );
  return parts.join(', ');
}

/** The components a gas line shows, in order, with the names it shows them by. */
const GAS_COMPONENTS = [
  ['ph', 'pH'],
  ['paco2', 'PCO2'],
  ['pao2', 'PO2'],
  ['hco3', 'HCO3'],
] as const;

/** "pH 7.28, PCO2 8.1 kPa, PO2 7.4 kPa, HCO3 31 mmol/L" as the laboratory reported them. */
export function gasValues(gas: BloodGas): string {
  let values = '';
  for (const [component, name] of GAS_COMPONENTS) {
    const shown = formatGasValue(gas, component);
    if (shown !== undefined) {
      values += `${values === '' ? '' : ', '}${name} ${shown}`;
    }
  }
  return values || 'no values read';
}

function gasLine(gas: BloodGas, clock: CardClock): string {
  return `Blood gas (${gas.specimen}) ${clock.when(gas.at)}: ${gasValues(gas)}`;
}

function pressureModel(assessment: Assessment, policy: Policy): string {
  const model = assessment.barometricPressure.model;
  if (model === 'site-value') {
    return 'the site value in the policy';
  }
  return `${model === 'isa-1993' ? 'ICAO standard atmosphere' : 'West 1996 model'} at ${formatNumber(policy.site.altitudeM, 0)} m`;
}

/** "Inputs used": every current fact the advice could rest on, with its local time and FHIR reference. */
export function inputsSection(facts: Facts, assessment: Assessment, policy: Policy, clock: CardClock): DetailSection {
  const lines: (string | undefined)[] = [];
  if (assessment.order !== undefined) {
    lines.push(withReference(`Order under check: ${describeOrderAsRead(assessment.order)}`, assessment.order.reference));
  }
  if (assessment.delivery.kind === 'ok') {
    lines.push(`Estimated FiO2 delivered by the ordered device: ${formatFio2Range(assessment.delivery.value.fio2)}`);
  }
  if (facts.patient.ageYears !== undefined) {
    lines.push(`Age ${formatNumber(facts.patient.ageYears, 0)} years`);
  }
  if (facts.patient.bmiKgPerM2 !== undefined) {
    lines.push(`BMI ${formatNumber(facts.patient.bmiKgPerM2, 1)} kg/m2`);
  }
  lines.push(measuredLine('SpO2', assessment.current.spo2, clock));
  lines.push(measuredLine('Respiratory rate', assessment.current.respRate, clock));
  lines.push(measuredLine('Recorded FiO2', facts.fio2Fraction[0], clock));
  lines.push(measuredLine('Recorded oxygen flow', facts.o2FlowLPerMin[0], clock));
  lines.push(measuredLine('Haemoglobin', assessment.current.haemoglobin, clock));
  const { gas, arterialGas } = assessment.current;
  if (gas !== undefined) {
    lines.push(gasLine(gas, clock));
  }
  if (arterialGas !== undefined && arterialGas !== gas) {
    lines.push(gasLine(arterialGas, clock));
  }
  for (const reason of assessment.hypercapnicRisk.reasons) {
    lines.push(withReference(`Risk of hypercapnic respiratory failure: ${reason.evidence}`, reason.reference));
  }
  lines.push(`Barometric pressure ${formatMmHg(assessment.barometricPressure.mmHg)} (${pressureModel(assessment, policy)})`);
  if (facts.encounterUnit !== undefined) {
    lines.push(`Ward: ${facts.encounterUnit}`);
  }
  if (assessment.unit.kind === 'matched') {
    // Which unit override set the ranges, so a reader can trace a 92-96 % target to the policy's units list.
    lines.push(`Unit targets: ${assessment.unit.unit.name} (local policy, units list; matched by ${assessment.unit.matchedBy})`);
  }
  if (facts.missingData.length > 0) {
    lines.push(`Not available: ${facts.missingData.join(', ')}`);
  }
  return { heading: 'Inputs used', lines: lines.filter((line) => line !== undefined).map((line) => `- ${escapeMarkdown(line)}`) };
}

/** The short label of a reference key, or the key itself when the policy lacks it. */
export function referenceLabel(key: string, policy: Policy): string {
  return policy.references[key]?.label ?? key;
}

const NO_CALCULATION_LINE = '- No calculation was needed for this advice.';

/** One computation's lines of the calculation section. */
function calculationLines(c: Computation, policy: Policy): readonly string[] {
  return [
    `- **${escapeMarkdown(c.name)}** (${escapeMarkdown(referenceLabel(c.sourceKey, policy))})`,
    `  - Formula: ${escapeMarkdown(c.formula)}`,
    `  - With this patient's values: ${escapeMarkdown(c.substituted)}`,
    `  - Result: **${escapeMarkdown(c.result)}**`,
  ];
}

/** "Calculation": each computation's formula, this patient's numbers in it, and the result. */
export function calculationSection(computations: readonly Computation[], policy: Policy): DetailSection {
  if (computations.length === 0) {
    return { heading: 'Calculation', lines: [NO_CALCULATION_LINE] };
  }
  return { heading: 'Calculation', lines: computations.flatMap((c) => calculationLines(c, policy)) };
}

/** {@link calculationSection} as {@link renderSections} renders it, written straight as text. */
function calculationText(computations: readonly Computation[], policy: Policy): string {
  let lines = '';
  for (const computation of computations) {
    lines += `${lines === '' ? '' : '\n'}${calculationLines(computation, policy).join('\n')}`;
  }
  return `**Calculation**\n\n${lines === '' ? NO_CALCULATION_LINE : lines}`;
}

const SET_ASIDE_REASONS: Readonly<Record<SetAsideNote['reason'], string>> = {
  implausible: 'implausible value',
  stale: 'too old to count as current',
  'unreadable-unit': 'unit not understood',
  unrecognised: 'not recognised',
  'error-in-source': 'marked as an error in the record',
};

/** "Set aside": values the reader did not use, and why. */
export function setAsideSection(notes: readonly SetAsideNote[]): DetailSection {
  if (notes.length === 0) {
    return { heading: 'Set aside', lines: ['- Nothing was set aside.'] };
  }
  return {
    heading: 'Set aside',
    lines: notes.map(
      (note) => `- ${escapeMarkdown(withReference(`${note.what}: ${SET_ASIDE_REASONS[note.reason]}. ${note.detail}`, note.reference))}`,
    ),
  };
}

const SAFE_URL = /^https?:\/\/[^\s<>]+$/;

/**
 * The source keys of a finding: its own, then those of its computations, each once. Its card, detail
 * and workings all ask. Most findings already list every key once, their computations' among them, so
 * their own list is the answer as it is, with nothing made or kept per finding; the others' is built.
 */
export function findingSourceKeys(finding: Finding): readonly string[] {
  return listsEachSourceKeyOnce(finding)
    ? finding.sourceKeys
    : [...new Set([...finding.sourceKeys, ...finding.computations.map((c) => c.sourceKey)])];
}

function listsEachSourceKeyOnce(finding: Finding): boolean {
  const keys = finding.sourceKeys;
  for (let index = 0; index < keys.length; index += 1) {
    if (keys.indexOf(keys[index] ?? '') !== index) {
      return false;
    }
  }
  return finding.computations.every((computation) => keys.includes(computation.sourceKey));
}

/** "Sources": each key's citation from the policy, then the policy itself. Unknown keys are reported. */
export function sourcesSection(keys: readonly string[], policy: Policy): DetailSection & { readonly unknownKeys: readonly string[] } {
  const unknownKeys: string[] = [];
  const lines = [...new Set(keys)].map((key) => {
    const reference = policy.references[key];
    if (reference === undefined) {
      unknownKeys.push(key);
      return `- ${escapeMarkdown(key)}: not in this policy's reference list`;
    }
    const link = reference.url !== undefined && SAFE_URL.test(reference.url) ? ` <${reference.url}>` : '';
    return `- **${escapeMarkdown(reference.label)}**: ${escapeMarkdown(reference.citation)}${link}`;
  });
  lines.push(`- Local policy: ${escapeMarkdown(`${policy.title} (${policy.id} v${policy.version}), ${policy.site.name}`)}`);
  return { heading: 'Sources', lines, unknownKeys };
}

/** "Cautions": every caution line of the policy (oximetry limits, advisory only, local lines). */
export function cautionsSection(policy: Policy): DetailSection {
  return { heading: 'Cautions', lines: policy.cautions.map((line) => `- ${escapeMarkdown(line)}`) };
}

export function renderSections(sections: readonly DetailSection[]): string {
  return sections.map((section) => `**${section.heading}**\n\n${section.lines.join('\n')}`).join('\n\n');
}

/** What the workings of one card are built from: the finding and the call it was made in. */
export interface WorkingsInput {
  readonly finding: Finding;
  readonly facts: Facts;
  readonly assessment: Assessment;
  readonly policy: Policy;
  readonly now: Date;
}

/**
 * The full workings of one card as GitHub-Flavored Markdown: inputs used, calculation, set aside,
 * sources and cautions. Pure.
 */
export function renderWorkings(input: WorkingsInput): string {
  const clock = cardClock(input.now, input.policy.site.timeZone);
  return renderSections([
    inputsSection(input.facts, input.assessment, input.policy, clock),
    calculationSection(input.finding.computations, input.policy),
    setAsideSection(input.facts.setAside),
    sourcesSection(findingSourceKeys(input.finding), input.policy),
    cautionsSection(input.policy),
  ]);
}

/**
 * The sources section of a list of keys, rendered once per policy and list: it is made of the policy
 * alone, and cards of one rule, and often of several, cite the same keys.
 */
function sourcesText(keys: readonly string[], policy: Policy): string {
  const byKeys = sourcesTextsOf(policy);
  const joinedKeys = keys.join('\n');
  let text = byKeys.get(joinedKeys);
  if (text === undefined) {
    text = renderSections([sourcesSection(keys, policy)]);
    byKeys.set(joinedKeys, text);
  }
  return text;
}

const sourcesTextsOf = oncePerPolicy(() => new Map<string, string>());

/** The cautions section, rendered once per policy. */
const cautionsText = oncePerPolicy((policy) => renderSections([cautionsSection(policy)]));

/**
 * `renderWorkings` for every card of one call, with the same output: the sections all cards of one
 * call share (inputs per assessment, set aside) are built once, not once per card, and those made of
 * the policy alone (sources, cautions) once per policy, so that recording each card's workings in the
 * audit trail costs little on a call with many cards.
 */
export function prepareWorkings(
  facts: Facts,
  policy: Policy,
  now: Date,
  clock: CardClock = cardClock(now, policy.site.timeZone),
): (finding: Finding, assessment: Assessment) => string {
  // The shared sections are kept as rendered text: only the calculation is rendered per card. The
  // sections after it (set aside, sources, cautions) are joined once per call and list of cited keys.
  const inputsByAssessment = new Map<Assessment, string>();
  const setAside = renderSections([setAsideSection(facts.setAside)]);
  const cautions = cautionsText(policy);
  const endingsByKeys = new Map<string, string>();
  return (finding, assessment) => {
    let inputs = inputsByAssessment.get(assessment);
    if (inputs === undefined) {
      inputs = renderSections([inputsSection(facts, assessment, policy, clock)]);
      inputsByAssessment.set(assessment, inputs);
    }
    const keys = findingSourceKeys(finding);
    const joinedKeys = keys.join('\n');
    let ending = endingsByKeys.get(joinedKeys);
    if (ending === undefined) {
      ending = `${setAside}\n\n${sourcesText(keys, policy)}\n\n${cautions}`;
      endingsByKeys.set(joinedKeys, ending);
    }
    // renderSections joins sections with a blank line; so do these.
    return `${inputs}\n\n${calculationText(finding.computations, policy)}\n\n${ending}`;
  };
}
