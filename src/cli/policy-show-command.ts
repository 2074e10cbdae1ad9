import { formatFraction, formatNumber, formatRange } from '../core/assessment/format.js';
import type { UnitTargets } from '../core/policy.js';
import { parsePolicyText } from '../policy/parse-policy.js';
import { UsageError, type CliIo, type ExitCode } from './cli-io.js';
import { parseOptions } from './parse-options.js';
import { policyView, type GuidelineView, type PolicyView, type ShownRange } from './policy-view.js';

export const POLICY_SHOW_USAGE = `Usage: oxygen-order-checker policy show FILE [--unit NAME] [--json]

Shows the effective targets and thresholds of a policy file as a table, each with its unit: the SpO2
ranges, which conditions carry a risk of hypercapnic respiratory failure, the critical SpO2, the NIV
and ventilation thresholds, high FiO2, freshness windows, the titration review, the rules switched
off or with changed indicators, the acknowledgements with their reasons, effectiveFrom, the devices
stocked with their flow limits and Venturi valves, the guidelines the cards cite, the local card
wording folder, and the override reasons the policy offers on cards.

  --unit NAME   the values on one unit: NAME as the record names the encounter's location (or a
                Location reference or identifier); says which unit override matched, or that none did
                and the policy's own ranges apply
  --json        the same, as JSON

Exit 0 when shown, 1 when the file cannot be read, 2 when it is not valid (run policy validate for details).`;

interface Row {
  readonly label: string;
  readonly value: string;
  readonly note?: string;
}

interface Section {
  readonly title: string;
  readonly rows: readonly Row[];
}

const list = (items: readonly string[]): string => (items.length === 0 ? 'none' : items.join(', '));
const minutes = (n: number): string => `${formatNumber(n, 1)} min`;

function setBy(range: ShownRange, everyUnit = false): string {
  if (range.setBy.by === 'unit') return `unit override '${range.setBy.unit}' (local policy)`;
  return everyUnit ? 'policy, on every unit' : 'policy';
}

function effectiveLine(view: PolicyView): string {
  const state = view.policy.inEffect;
  switch (state.kind) {
    case 'no-date':
      return 'not stated: in effect once loaded';
    case 'in-effect':
      return `${state.effectiveFrom} (in effect; the date at the site is ${state.siteDate})`;
    case 'not-yet':
      return `${state.effectiveFrom} (NOT YET in effect: the date at the site is ${state.siteDate}; loading it now uses it early)`;
  }
}

function unitLine(view: PolicyView): string {
  const count = `${view.units.length} unit override${view.units.length === 1 ? '' : 's'} in the file`;
  if (view.unit === undefined) return `none asked (--unit NAME): the policy's own ranges; ${count}`;
  const { asked, match } = view.unit;
  if (match.kind === 'none') {
    return `'${asked}': no unit override matched (${count}); the policy's own ranges apply`;
  }
  const also = match.alsoMatched.length === 0 ? '' : `; also matched ${list(match.alsoMatched)}, but the first listed wins`;
  return `'${asked}': unit override '${match.unit.name}' (units.${match.index}) matched by ${match.matchedBy}${also}`;
}

function unitRow(unit: UnitTargets, index: number): Row {
  const matchers = [
    ...unit.match.names.map((n) => `name "${n}"`),
    ...unit.match.patterns.map((p) => `pattern "${p}"`),
    ...unit.match.locations.map((l) => `location ${l}`),
  ];
  const ranges = [
    unit.targets.standard === undefined ? undefined : `standard ${formatRange(unit.targets.standard)}`,
    unit.targets.hypercapnicRisk === undefined ? undefined : `at risk ${formatRange(unit.targets.hypercapnicRisk)}`,
  ].filter((r) => r !== undefined);
  return { label: `${index + 1}. ${unit.name}`, value: ranges.join('; '), note: matchers.join('; ') };
}

const litres = (n: number): string => `${formatNumber(n, 1)} L/min`;
/** "1–4 L/min"; "15 L/min" for a device run at one flow only. */
const flowLimits = (l: { readonly from: number; readonly to: number }): string =>
  l.from === l.to ? litres(l.to) : `${formatNumber(l.from, 1)}–${litres(l.to)}`;

function deviceRows(view: PolicyView): Row[] {
  const { kinds, venturiValves, usualVenturiValvesNotStocked } = view.devices;
  // One row per Venturi valve: the nurse looks for a valve by its setting and reads its flow.
  const rows: Row[] = kinds
    .filter((k) => k.stocked)
    .flatMap((k) =>
      k.kind === 'venturi-mask'
        ? venturiValves.map((v) => ({ label: `Venturi mask, ${formatNumber(v.fio2Percent, 1)} % valve`, value: `O2 at least ${litres(v.minimumFlowLPerMin)}` }))
        : [{ label: k.label, value: k.flowLPerMin === undefined ? '' : flowLimits(k.flowLPerMin) }],
    );
  const notStocked = kinds.filter((k) => !k.stocked).map((k) => k.label);
  rows.push({
    label: 'Not stocked',
    value: notStocked.length === 0 ? 'none' : `${notStocked.join(', ')}: no card offers ${notStocked.length === 1 ? 'it' : 'them'}`,
  });
  if (venturiValves.length > 0) {
    rows.push({
      label: 'Usual Venturi valves not stocked',
      value:
        usualVenturiValvesNotStocked.length === 0
          ? 'none'
          : `${usualVenturiValvesNotStocked.map((p) => `${formatNumber(p, 1)} %`).join(', ')}: no card offers ${usualVenturiValvesNotStocked.length === 1 ? 'it' : 'them'}`,
    });
  }
  return rows;
}

const labelOf = (g: GuidelineView): string => g.label ?? `'${g.key}'`;

function clinicalBasisRows(view: PolicyView): Row[] {
  const { guidelines, citedForRules, topics } = view.clinicalBasis;
  const primary = guidelines.find((g) => g.primary);
  const primaryLabel = primary === undefined ? labelOf({ key: view.policy.basis.key, label: view.policy.basis.label }) : labelOf(primary);
  const rules = (n: number): string => `${n} ${n === 1 ? 'rule' : 'rules'}`;
  return [
    { label: 'Guidelines followed', value: guidelines.map((g) => `${labelOf(g)}${g.primary ? ' (primary)' : ''}`).join(', ') },
    ...citedForRules.map((c) => ({ label: `Cards citing ${labelOf(c)}`, value: `${rules(c.ruleIds.length)}: ${c.ruleIds.join(', ')}` })),
    { label: citedForRules.length === 0 ? 'Every card cites' : 'Every other card cites', value: `${primaryLabel} (primary)` },
    ...topics.map((t) => ({
      label: `${t.topic[0]?.toUpperCase() ?? ''}${t.topic.slice(1)} thresholds cite`,
      value: `${labelOf(t)}${t.setBy === 'primary' ? ' (primary; none named for the topic)' : ''}`,
    })),
  ];
}

function cardRows(view: PolicyView): Row[] {
  const { merge, allCards, byRule } = view.overrideReasons;
  const reason = (r: { readonly code: string; readonly display: string }): string => `"${r.display}" (${r.code})`;
  const count = (n: number): string => `${n} ${n === 1 ? 'reason' : 'reasons'}`;
  return [
    {
      label: 'Local card wording folder',
      value: view.cardWording.folder === undefined ? 'none: the bundled wording for every card' : `${view.cardWording.folder} (from the policy file's folder)`,
    },
    {
      label: 'Override reasons merged by',
      value: merge === 'add' ? "add: after each card file's own reasons" : "replace: instead of the card file's, for a rule the policy gives any",
    },
    { label: 'Reasons on every card', value: allCards.length === 0 ? 'none' : allCards.map(reason).join('; ') },
    { label: 'Reasons for one rule', value: byRule.length === 0 ? 'none' : byRule.map((r) => `${r.ruleId}: ${count(r.count)}`).join(', ') },
  ];
}

function sections(view: PolicyView): Section[] {
  const { targets, hypercapnicRisk: risk, thresholds: t, freshness: f, titrationReview: tr } = view;
  const acks = view.acknowledgements.map((a) => ({
    label: `${a.ruleId} ${a.change}`,
    value: a.reason,
    note: [a.by, a.date].filter((x) => x !== undefined).join(', '),
  }));
  return [
    {
      title: 'Policy file',
      rows: [
        { label: 'Policy', value: `${view.policy.id} v${view.policy.version}: ${view.policy.title}` },
        { label: 'Based on', value: view.policy.basis.label ?? view.policy.basis.key },
        { label: 'Effective from', value: effectiveLine(view) },
        {
          label: 'Site',
          value: `${view.policy.site.name}, ${formatNumber(view.policy.site.altitudeM, 0)} m, ${view.policy.site.timeZone}`,
        },
        { label: 'Unit', value: unitLine(view) },
      ],
    },
    {
      title: 'Target SpO2 ranges',
      rows: [
        { label: 'Standard', value: formatRange(targets.standard), note: setBy(targets.standard) },
        { label: 'At risk of hypercapnic failure', value: formatRange(targets.hypercapnicRisk), note: setBy(targets.hypercapnicRisk) },
        {
          label: 'Oxygen toxicity (paraquat, bleomycin)',
          value: formatRange(targets.oxygenToxicityRisk),
          note: setBy(targets.oxygenToxicityRisk, true),
        },
      ],
    },
    {
      title: 'Hypercapnic risk',
      rows: [
        { label: 'Conditions carrying risk', value: list(risk.conditions) },
        { label: 'Hypercapnia: PaCO2 at least', value: risk.hypercapniaPaco2.display },
        { label: 'Chronic retention: HCO3 above', value: `${formatNumber(risk.chronicBicarbonateAboveMmolPerL, 1)} mmol/L` },
        { label: 'Morbid obesity: BMI above', value: `${formatNumber(risk.morbidObesityBmiAbove, 1)} kg/m²` },
        {
          label: 'Acute hypercapnia, no chronic risk',
          value: risk.acuteHypercapniaWithoutRiskTarget === 'keep' ? "keep the patient's range" : 'move to the at-risk range',
        },
      ],
    },
    {
      title: 'Special conditions and population',
      rows: [
        { label: 'Oxygen only if hypoxaemic', value: list(view.specialConditions.oxygenOnlyIfHypoxaemic) },
        { label: 'Adult checks from age', value: `${view.population.minimumAgeYears} years` },
      ],
    },
    {
      title: 'Escalation thresholds (on every unit)',
      rows: [
        { label: 'Critical SpO2 below', value: `${formatNumber(t.criticalSpo2BelowPercent, 1)} %` },
        { label: 'Critical below target by more than', value: `${formatNumber(t.criticalPointsBelowTarget, 1)} points` },
        { label: 'Fall in SpO2 of at least', value: `${formatNumber(t.spo2FallPoints, 1)} points` },
        { label: 'Acidosis: pH below', value: formatNumber(t.acidosisPhBelow, 2) },
        { label: 'Consider NIV: pH below, PaCO2 above', value: `${formatNumber(t.nivPhBelow, 2)}, ${t.nivPaco2Above.display}` },
        { label: 'Invasive ventilation: pH below', value: formatNumber(t.invasiveVentilationPhBelow, 2) },
        { label: 'High FiO2 at least', value: formatFraction(t.highOxygenFio2AtLeast) },
        { label: 'High flow failing: FiO2 at least', value: formatFraction(t.highFlowFailingFio2AtLeast) },
        { label: 'Repeat blood gas after', value: `${t.repeatGasMinutes.from}–${t.repeatGasMinutes.to} min` },
      ],
    },
    {
      title: 'Freshness',
      rows: [
        { label: 'Vital signs', value: minutes(f.vitalSignsMinutes) },
        { label: 'Blood gas', value: minutes(f.bloodGasMinutes) },
        { label: 'Haemoglobin', value: `${f.haemoglobinHours} h` },
        { label: 'Previous hypercapnia', value: `${f.previousHypercapniaDays} days` },
        { label: 'One gas: results filed within', value: minutes(f.bloodGasGroupingMinutes) },
      ],
    },
    {
      title: 'Titration review (patient-view)',
      rows: [
        { label: 'Looks back over', value: `${tr.lookbackHours} h` },
        { label: 'A reading stands at most', value: minutes(tr.maxReadingHoldMinutes) },
        { label: 'Observed time needed', value: minutes(tr.minObservedMinutes) },
        { label: 'Above target on oxygen: share', value: `${formatNumber(tr.aboveTargetShareAtLeastPercent, 1)} % of observed time` },
        { label: 'Below target: share', value: `${formatNumber(tr.belowTargetShareAtLeastPercent, 1)} % of observed time` },
        {
          label: 'Stop from flow: standard, at risk',
          value: `${formatNumber(tr.stopFromFlowLPerMin.standard, 1)} L/min, ${formatNumber(tr.stopFromFlowLPerMin.hypercapnicRisk, 1)} L/min`,
        },
        { label: 'Readings in range before stopping', value: String(tr.stopAfterReadingsInRange) },
      ],
    },
    {
      title: 'Rules',
      rows: [
        { label: 'Switched off', value: list(view.rules.disabled) },
        {
          label: 'Indicators changed',
          value: list(Object.entries(view.rules.indicatorsChanged).map(([id, indicator]) => `${id} → ${indicator}`)),
        },
      ],
    },
    { title: 'Acknowledgements', rows: acks.length === 0 ? [{ label: 'none', value: '' }] : acks },
    { title: 'Unit overrides (the first that matches wins)', rows: view.units.length === 0 ? [{ label: 'none', value: '' }] : view.units.map(unitRow) },
    { title: 'Devices stocked (device catalogue): flow limits, Venturi valves with their minimum O2 flow', rows: deviceRows(view) },
    { title: 'What the cards cite (clinical basis)', rows: clinicalBasisRows(view) },
    { title: 'Card wording and override reasons', rows: cardRows(view) },
  ];
}

/** The sections as aligned text: one label column for the whole table, a value column per section. */
export function formatPolicyView(view: PolicyView): string {
  const all = sections(view);
  const labelWidth = Math.max(...all.flatMap((s) => s.rows.map((r) => r.label.length)));
  return all
    .map((section) => {
      const valueWidth = Math.max(...section.rows.map((r) => (r.note === undefined || r.note === '' ? 0 : r.value.length)));
      const rows = section.rows.map((r) => {
        const line = `  ${r.label.padEnd(labelWidth)}  ${r.note === undefined || r.note === '' ? r.value : `${r.value.padEnd(valueWidth)}  ${r.note}`}`;
        return line.trimEnd();
      });
      return [section.title, ...rows].join('\n');
    })
    .join('\n\n');
}

export function runPolicyShowCommand(args: readonly string[], io: CliIo): ExitCode {
  const parsed = parseOptions(args, { unit: { type: 'string' }, json: { type: 'boolean' } });
  if (parsed.values['help'] === true) {
    io.stdout(`${POLICY_SHOW_USAGE}\n`);
    return 0;
  }
  const [file, ...extra] = parsed.positionals;
  if (file === undefined || extra.length > 0) {
    throw new UsageError('give exactly one policy FILE');
  }
  const unitName = parsed.values['unit'];
  if (typeof unitName === 'string' && unitName.trim() === '') {
    throw new UsageError('--unit needs a unit name');
  }
  let text: string;
  try {
    text = io.readFile(file);
  } catch {
    io.stderr(`oxygen-order-checker policy show: cannot read ${file}\n`);
    return 1;
  }
  const result = parsePolicyText(text);
  if (result.kind === 'invalid') {
    const lines = result.problems.map((p) => `  ${p.line === undefined ? '' : `${p.line}:${p.column ?? 1}: `}${p.path}: ${p.message}\n`);
    io.stderr(`oxygen-order-checker policy show: ${file} is not valid; run policy validate ${file} for the fixes\n${lines.join('')}`);
    return 2;
  }
  const view = policyView(result.policy, result.acknowledgements, {
    now: io.now(),
    unitName: typeof unitName === 'string' ? unitName : undefined,
  });
  if (parsed.values['json'] === true) {
    io.stdout(`${JSON.stringify({ ...view, warnings: result.warnings }, null, 2)}\n`);
    return 0;
  }
  const warnings =
    result.warnings.length === 0
      ? ''
      : `\n\nWarnings (policy validate ${file} shows the fixes)\n${result.warnings.map((w) => `  ${w.path}: ${w.message}`).join('\n')}`;
  io.stdout(`${formatPolicyView(view)}${warnings}\n`);
  return 0;
}
