import { DEVICE_MODELS } from '../core/devices/index.js';
import type { OverrideReasonText, Policy, UnitTargets } from '../core/policy.js';
import { DEVICE_KINDS, type Indicator, type SaturationRange } from '../core/types.js';
import { GUIDELINE_TOPICS } from './card-sections-schema.js';
import type { PolicyAcknowledgement } from './parse-policy.js';
import { defaultIndicatorOf, registeredRuleIds } from './rule-ids.js';

/**
 * What changed between two policies, in the oxygen team's terms: "critical SpO2: below 85 % → below
 * 88 %", "risk condition added: pregnancy", "switched off: news2-scale-2". Pure: two parsed policies in,
 * a list of changes out, so it is tested without files.
 *
 * It walks the whole Policy, so a section it has no wording for (one added after this was written)
 * still shows, under "Other changes", as `changed: <path>: old → new`; the sections it knows get
 * clinical wording and a heading.
 */

export interface PolicyVersion {
  readonly policy: Policy;
  /** sha256 of the file's bytes, as cards and log lines carry it; absent when not read from a file. */
  readonly contentHash?: string;
  /** The committee's records for critical rules switched off or lowered (not part of Policy). */
  readonly acknowledgements?: readonly PolicyAcknowledgement[];
}

export const HEADINGS = [
  'Identity',
  'When it applies',
  'Basis and site',
  'Target ranges',
  'Unit overrides',
  'Who is at risk of hypercapnic respiratory failure',
  'Population',
  'Special conditions',
  'Thresholds',
  'Freshness windows',
  'Titration review',
  'Rules and indicators',
  'Acknowledgements',
  'Devices stocked',
  'What the cards cite',
  'Card wording and override reasons',
  'References and cautions',
  'Other changes',
] as const;

export type Heading = (typeof HEADINGS)[number];

export interface PolicyChange {
  readonly heading: Heading;
  /** Where in the policy, e.g. `thresholds.criticalSpo2BelowPercent`, `unitOverrides[name=ICU].targets`. */
  readonly path: string;
  readonly kind: 'changed' | 'added' | 'removed';
  /** The change in words, with units. */
  readonly text: string;
  readonly old?: unknown;
  readonly new?: unknown;
}

export interface PolicyIdentity {
  readonly id: string;
  readonly version: string;
  readonly title: string;
  readonly contentHash?: string;
}

export interface PolicyDiff {
  readonly old: PolicyIdentity;
  readonly new: PolicyIdentity;
  /** Changes of id, version, title or content hash: they tell the files apart but change no advice. */
  readonly identity: readonly PolicyChange[];
  /** Every other change, in heading order. Empty means no clinical change. */
  readonly changes: readonly PolicyChange[];
}

type Step = string | number | { readonly key: string; readonly value: string };

interface RawDiff {
  readonly path: readonly Step[];
  readonly old: unknown;
  readonly new: unknown;
  /** An item added to or removed from a list of plain values (a set, such as disabledRules). */
  readonly item: boolean;
}

const isRecord = (v: unknown): v is Readonly<Record<string, unknown>> => v !== null && typeof v === 'object' && !Array.isArray(v);

function sameValue(a: unknown, b: unknown): boolean {
  if (a === b) return true;
  if (Array.isArray(a) && Array.isArray(b)) return a.length === b.length && a.every((v, i) => sameValue(v, b[i]));
  if (isRecord(a) && isRecord(b)) {
    const keys = new Set([...Object.keys(a), ...Object.keys(b)]);
    return [...keys].every((k) => sameValue(a[k], b[k]));
  }
  return false;
}

/** Values read as one quantity: a range, a from–to window, a pressure with the words it was written in. */
function isQuantity(v: unknown): boolean {
  if (!isRecord(v)) return false;
  const keys = Object.keys(v).sort().join(',');
  return keys === 'highPercent,lowPercent' || keys === 'from,to' || keys === 'display,mmHg';
}

const isPlain = (v: unknown): boolean => v === null || (typeof v !== 'object' && typeof v !== 'function');

/** The key that names the items of a list of objects (`name: ICU`), when every item has a distinct one. */
function identifyingKey(a: readonly unknown[], b: readonly unknown[]): string | undefined {
  const items = [...a, ...b];
  if (items.length === 0 || !items.every(isRecord)) return undefined;
  return ['id', 'ruleId', 'name', 'unit', 'key', 'code', 'kind', 'device'].find((key) =>
    [a, b].every((list) => {
      const values = list.map((item) => (isRecord(item) ? item[key] : undefined));
      return values.every((v) => typeof v === 'string') && new Set(values).size === values.length;
    }),
  );
}

function walk(a: unknown, b: unknown, path: readonly Step[], out: RawDiff[]): void {
  if (sameValue(a, b)) return;
  if (a === undefined || b === undefined || isQuantity(a) || isQuantity(b)) {
    out.push({ path, old: a, new: b, item: false });
    return;
  }
  if (isRecord(a) && isRecord(b)) {
    for (const key of new Set([...Object.keys(a), ...Object.keys(b)])) walk(a[key], b[key], [...path, key], out);
    return;
  }
  if (Array.isArray(a) && Array.isArray(b)) {
    if (a.every(isPlain) && b.every(isPlain)) {
      for (const v of a) if (!b.some((w) => sameValue(v, w))) out.push({ path, old: v, new: undefined, item: true });
      for (const v of b) if (!a.some((w) => sameValue(v, w))) out.push({ path, old: undefined, new: v, item: true });
      return;
    }
    const key = identifyingKey(a, b);
    if (key !== undefined) {
      const name = (item: unknown): string => String(isRecord(item) ? item[key] : '');
      const names = [...new Set([...a.map(name), ...b.map(name)])];
      for (const value of names) {
        walk(
          a.find((item) => name(item) === value),
          b.find((item) => name(item) === value),
          [...path, { key, value }],
          out,
        );
      }
      return;
    }
    if (a.length === b.length) {
      a.forEach((item, index) => walk(item, b[index], [...path, index], out));
      return;
    }
    for (const v of a) if (!b.some((w) => sameValue(v, w))) out.push({ path, old: v, new: undefined, item: true });
    for (const v of b) if (!a.some((w) => sameValue(v, w))) out.push({ path, old: undefined, new: v, item: true });
    return;
  }
  out.push({ path, old: a, new: b, item: false });
}

export function pathText(path: readonly Step[]): string {
  return path
    .map((step, i) =>
      typeof step === 'number' ? `[${step}]` : typeof step === 'string' ? `${i === 0 ? '' : '.'}${step}` : `[${step.key}=${step.value}]`,
    )
    .join('');
}

/** The path with list positions left out, to find the wording for it: `thresholds.repeatGasMinutes`. */
const keyPath = (path: readonly Step[]): string => path.filter((s) => typeof s === 'string').join('.');

/**
 * The unit a value carries, read from the last key in its path that names one (the format puts the
 * unit in every threshold's name): `stopFromFlowLPerMin.standard` is in L/min.
 */
function unitOf(path: readonly Step[]): string {
  const units: readonly [RegExp, string][] = [
    [/Percent$/, ' %'],
    [/LPerMin$/, ' L/min'],
    [/MmolPerL$/, ' mmol/L'],
    [/MmHg$/, ' mmHg'],
    [/Minutes$/, ' min'],
    [/Hours$/, ' h'],
    [/Days$/, ' days'],
    [/Years$/, ' years'],
    [/Points$|PointsBelowTarget$/, ' points'],
    [/[a-z]M$/, ' m'],
  ];
  for (const step of [...path].reverse()) {
    if (typeof step !== 'string') continue;
    const unit = units.find(([pattern]) => pattern.test(step));
    if (unit !== undefined) return unit[1];
  }
  return '';
}

/** A value as the oxygen team reads it: "94–98 %", "6.0 kPa", "30–60 min", "'Europe/London'". */
function show(value: unknown, unit: string): string {
  if (value === undefined) return '(none)';
  if (isRecord(value)) {
    if (typeof value['display'] === 'string') return value['display'];
    if (typeof value['lowPercent'] === 'number') return `${String(value['lowPercent'])}–${String(value['highPercent'])} %`;
    if (typeof value['from'] === 'number') return `${String(value['from'])}–${String(value['to'])}${unit}`;
    return JSON.stringify(value);
  }
  if (Array.isArray(value)) return JSON.stringify(value);
  if (typeof value === 'string') return `'${value}'`;
  return typeof value === 'number' || typeof value === 'boolean' ? `${value}${unit}` : JSON.stringify(value);
}

interface Wording {
  readonly heading: Heading;
  readonly label: string;
  /** Words before the value, e.g. "below" for a threshold read as "SpO2 below 85 %". */
  readonly before?: string;
  readonly unit?: string;
}

/** Clinical wording for the keys the format has today; a key without one falls back to its path. */
const WORDING: Readonly<Record<string, Wording>> = {
  basisKey: { heading: 'Basis and site', label: 'guideline the policy is based on' },
  'site.name': { heading: 'Basis and site', label: 'site' },
  'site.altitudeM': { heading: 'Basis and site', label: 'site altitude' },
  'site.barometricPressureMmHg': { heading: 'Basis and site', label: 'fixed barometric pressure (instead of the altitude model)', unit: ' mmHg' },
  'site.timeZone': { heading: 'Basis and site', label: 'time zone' },
  'targets.standard': { heading: 'Target ranges', label: 'standard target (patients not at risk of hypercapnia)' },
  'targets.hypercapnicRisk': { heading: 'Target ranges', label: 'target at risk of hypercapnic respiratory failure' },
  'targets.oxygenToxicityRisk': { heading: 'Target ranges', label: 'target at risk of oxygen toxicity (paraquat, bleomycin)' },
  'hypercapnicRisk.conditions': { heading: 'Who is at risk of hypercapnic respiratory failure', label: 'risk condition' },
  'hypercapnicRisk.hypercapniaPaco2': { heading: 'Who is at risk of hypercapnic respiratory failure', label: 'hypercapnia', before: 'PaCO2 at or above' },
  'hypercapnicRisk.chronicBicarbonateAboveMmolPerL': { heading: 'Who is at risk of hypercapnic respiratory failure', label: 'long-standing hypercapnia', before: 'HCO3 above' },
  'hypercapnicRisk.morbidObesityBmiAbove': { heading: 'Who is at risk of hypercapnic respiratory failure', label: 'morbid obesity', before: 'BMI above', unit: ' kg/m²' },
  'hypercapnicRisk.acuteHypercapniaWithoutRiskTarget': { heading: 'Who is at risk of hypercapnic respiratory failure', label: 'acute hypercapnia without chronic risk' },
  'population.minimumAgeYears': { heading: 'Population', label: 'minimum age for adult advice' },
  'specialConditions.oxygenOnlyIfHypoxaemic': { heading: 'Special conditions', label: 'oxygen only if hypoxaemic' },
  'freshness.vitalSignsMinutes': { heading: 'Freshness windows', label: 'SpO2, FiO2, flow and respiratory rate count as current for' },
  'freshness.bloodGasMinutes': { heading: 'Freshness windows', label: 'a blood gas counts as current for' },
  'freshness.haemoglobinHours': { heading: 'Freshness windows', label: 'haemoglobin counts as current for' },
  'freshness.previousHypercapniaDays': { heading: 'Freshness windows', label: 'an old gas shows previous hypercapnia for' },
  'freshness.bloodGasGroupingMinutes': { heading: 'Freshness windows', label: 'results filed this close are one gas' },
  'thresholds.acidosisPhBelow': { heading: 'Thresholds', label: 'acidosis', before: 'pH below' },
  'thresholds.nivPhBelow': { heading: 'Thresholds', label: 'consider NIV', before: 'pH below' },
  'thresholds.nivPaco2Above': { heading: 'Thresholds', label: 'consider NIV', before: 'PaCO2 above' },
  'thresholds.invasiveVentilationPhBelow': { heading: 'Thresholds', label: 'consider invasive ventilation', before: 'pH below' },
  'thresholds.criticalSpo2BelowPercent': { heading: 'Thresholds', label: 'critical SpO2', before: 'below' },
  'thresholds.criticalPointsBelowTarget': { heading: 'Thresholds', label: 'low SpO2 critical when below the target by more than', unit: ' points' },
  'thresholds.highOxygenFio2AtLeast': { heading: 'Thresholds', label: 'senior review for high oxygen', before: 'FiO2 at or above' },
  'thresholds.venturiTachypnoeaRespRateAbove': { heading: 'Thresholds', label: 'Venturi flow raised', before: 'respiratory rate above', unit: '/min' },
  'thresholds.venturiTachypnoeaFlowMultiplier': { heading: 'Thresholds', label: 'Venturi flow in tachypnoea', before: '×' },
  'thresholds.clusterHeadacheFlowLPerMin': { heading: 'Thresholds', label: 'cluster headache flow' },
  'thresholds.pneumothoraxFlowLPerMin': { heading: 'Thresholds', label: 'pneumothorax flow' },
  'thresholds.nasalCannulaStepDownLPerMin': { heading: 'Thresholds', label: 'nasal cannula weaning step' },
  'thresholds.repeatGasMinutes': { heading: 'Thresholds', label: 'repeat blood gas after a change, within' },
  'thresholds.flowmeterMaxLPerMin': { heading: 'Thresholds', label: 'highest flowmeter flow' },
  'thresholds.highFlowFailingFio2AtLeast': { heading: 'Thresholds', label: 'high flow failing', before: 'set FiO2 at or above' },
  'thresholds.oxygenNeedTrendMinutes': { heading: 'Thresholds', label: 'rising oxygen need looked for over' },
  'thresholds.spo2FallPoints': { heading: 'Thresholds', label: 'SpO2 fall that calls for assessment', unit: ' points' },
  disabledRules: { heading: 'Rules and indicators', label: 'rule' },
  cautions: { heading: 'References and cautions', label: 'caution line' },
};

/** The heading of a section this file has no key-by-key wording for, by its first key. */
const SECTION_HEADINGS: Readonly<Record<string, Heading>> = {
  titrationReview: 'Titration review',
  thresholds: 'Thresholds',
  freshness: 'Freshness windows',
  targets: 'Target ranges',
  site: 'Basis and site',
  references: 'References and cautions',
};

const SEVERITY_RANK: Readonly<Record<Indicator, number>> = { info: 0, warning: 1, critical: 2 };

const isIndicator = (v: unknown): v is Indicator => v === 'info' || v === 'warning' || v === 'critical';

/** A change of a rule's indicator, read against the rule's default: what cards it gives before and after. */
function severityChange(ruleId: string, d: RawDiff): PolicyChange {
  const byDefault = defaultIndicatorOf(ruleId);
  const before = isIndicator(d.old) ? d.old : byDefault;
  const after = isIndicator(d.new) ? d.new : byDefault;
  const kind: PolicyChange['kind'] = d.old === undefined ? 'added' : d.new === undefined ? 'removed' : 'changed';
  const base = { heading: 'Rules and indicators' as const, path: pathText(d.path), kind, old: d.old, new: d.new };
  if (before === undefined || after === undefined || before === after) {
    return { ...base, text: `indicator of ${ruleId}: ${show(d.old, '')} → ${show(d.new, '')} (its default is ${byDefault ?? 'unknown'}; the cards do not change)` };
  }
  const direction = SEVERITY_RANK[after] > SEVERITY_RANK[before] ? 'raised' : 'lowered';
  const note = d.new === undefined ? ', back to its default' : after === byDefault ? ', its default' : '';
  return { ...base, text: `indicator of ${ruleId} ${direction}: ${before} → ${after}${note}` };
}

function referenceLabel(policy: Policy, key: string): string {
  const label = policy.references[key]?.label;
  return label === undefined ? `'${key}'` : `'${key}' (${label})`;
}

function describe(d: RawDiff, oldPolicy: Policy, newPolicy: Policy): PolicyChange {
  const path = pathText(d.path);
  const key = keyPath(d.path);
  const kind: PolicyChange['kind'] = d.old === undefined ? 'added' : d.new === undefined ? 'removed' : 'changed';
  const first = typeof d.path[0] === 'string' ? d.path[0] : '';
  if (first === 'severity' && typeof d.path[1] === 'string') return severityChange(d.path[1], d);
  if (key === 'basisKey') {
    return {
      heading: 'Basis and site',
      path,
      kind,
      old: d.old,
      new: d.new,
      text: `guideline the policy is based on: ${referenceLabel(oldPolicy, String(d.old))} → ${referenceLabel(newPolicy, String(d.new))}`,
    };
  }
  if (first === 'references' && d.path.length === 2 && typeof d.path[1] === 'string') {
    const policy = d.new === undefined ? oldPolicy : newPolicy;
    const text = kind === 'changed' ? `reference ${referenceLabel(policy, d.path[1])} changed` : `reference ${kind}: ${referenceLabel(policy, d.path[1])}`;
    return { heading: 'References and cautions', path, kind, old: d.old, new: d.new, text };
  }
  const wording = WORDING[key];
  const unit = wording?.unit ?? unitOf(d.path);
  const value = (v: unknown): string => `${wording?.before === undefined || v === undefined ? '' : `${wording.before} `}${show(v, unit)}`;
  if (wording === undefined) {
    const heading = SECTION_HEADINGS[first] ?? 'Other changes';
    const text = d.item || kind !== 'changed' ? `${kind}: ${path}: ${show(d.item ? (d.new ?? d.old) : (d.new ?? d.old), unit)}` : `changed: ${path}: ${show(d.old, unit)} → ${show(d.new, unit)}`;
    return { heading, path, kind, old: d.old, new: d.new, text };
  }
  if (d.item) {
    const verb = key === 'disabledRules' ? (d.new === undefined ? 'switched back on' : 'switched off') : `${wording.label} ${kind}`;
    const ruleId = String(d.new ?? d.old);
    const byDefault = defaultIndicatorOf(ruleId);
    const what = key === 'disabledRules' ? `${ruleId}${byDefault === undefined ? '' : ` (its cards: ${byDefault} by default)`}` : show(d.new ?? d.old, '');
    return { heading: wording.heading, path, kind, old: d.old, new: d.new, text: `${verb}: ${what}` };
  }
  let text = `${wording.label}: ${value(d.old)} → ${value(d.new)}`;
  if (isRecord(d.old) && isRecord(d.new) && typeof d.old['lowPercent'] === 'number' && typeof d.new['lowPercent'] === 'number') {
    text += rangeMove(d.old as unknown as SaturationRange, d.new as unknown as SaturationRange);
  }
  // Within 0.05 mmHg (under 0.01 kPa): a value converted by hand and rounded is the same threshold.
  if (isRecord(d.old) && isRecord(d.new) && typeof d.old['mmHg'] === 'number' && Math.abs(d.old['mmHg'] - Number(d.new['mmHg'])) < 0.05) {
    text += ' (the same pressure, written differently)';
  }
  return { heading: wording.heading, path, kind, old: d.old, new: d.new, text };
}

/** " (both bounds 2 points lower)": how a range moved, so a reader need not subtract. */
function rangeMove(before: SaturationRange, after: SaturationRange): string {
  const low = after.lowPercent - before.lowPercent;
  const high = after.highPercent - before.highPercent;
  const moved = (n: number): string => (n === 0 ? 'unchanged' : `${Math.abs(n)} ${Math.abs(n) === 1 ? 'point' : 'points'} ${n > 0 ? 'higher' : 'lower'}`);
  return low === high ? ` (both bounds ${moved(low)})` : ` (lower bound ${moved(low)}, upper bound ${moved(high)})`;
}

/** Hex characters of the content hash shown, as on cards' source labels (src/cds/build-card.ts). */
const SHORT_HASH_LENGTH = 12;

const IDENTITY_KEYS = ['id', 'version', 'title'] as const;

function identityOf(v: PolicyVersion): PolicyIdentity {
  const { id, version, title } = v.policy;
  return v.contentHash === undefined ? { id, version, title } : { id, version, title, contentHash: v.contentHash };
}

const ackKey = (a: PolicyAcknowledgement): string => `${a.ruleId} ${a.change}`;

function acknowledgementChanges(before: readonly PolicyAcknowledgement[], after: readonly PolicyAcknowledgement[]): PolicyChange[] {
  const changes: PolicyChange[] = [];
  const words = (a: PolicyAcknowledgement): string =>
    `${a.ruleId} ${a.change}: ${a.reason}${a.by === undefined ? '' : `; by ${a.by}`}${a.date === undefined ? '' : `, ${a.date}`}`;
  const path = (a: PolicyAcknowledgement): string => `acknowledgements[ruleId=${a.ruleId}]`;
  for (const a of before) {
    const now = after.find((b) => ackKey(b) === ackKey(a));
    if (now === undefined) {
      changes.push({ heading: 'Acknowledgements', path: path(a), kind: 'removed', old: a, text: `removed: ${words(a)}` });
    } else if (!sameValue(a, now)) {
      changes.push({ heading: 'Acknowledgements', path: path(a), kind: 'changed', old: a, new: now, text: `changed: ${words(a)} → ${words(now)}` });
    }
  }
  for (const b of after) {
    if (!before.some((a) => ackKey(a) === ackKey(b))) {
      changes.push({ heading: 'Acknowledgements', path: path(b), kind: 'added', new: b, text: `added: ${words(b)}` });
    }
  }
  return changes;
}

export function diffPolicies(before: PolicyVersion, after: PolicyVersion): PolicyDiff {
  const identity: PolicyChange[] = [];
  for (const key of IDENTITY_KEYS) {
    const a = before.policy[key];
    const b = after.policy[key];
    if (a !== b) identity.push({ heading: 'Identity', path: key, kind: 'changed', old: a, new: b, text: `${key}: ${a} → ${b}` });
  }
  if (before.contentHash !== undefined && after.contentHash !== undefined && before.contentHash !== after.contentHash) {
    identity.push({
      heading: 'Identity',
      path: '(content hash)',
      kind: 'changed',
      old: before.contentHash,
      new: after.contentHash,
      text: `content hash: ${before.contentHash.slice(0, SHORT_HASH_LENGTH)} → ${after.contentHash.slice(0, SHORT_HASH_LENGTH)} (as cards show it)`,
    });
  }
  const raw: RawDiff[] = [];
  const strip = (p: Policy): Record<string, unknown> => {
    const { id: _id, version: _version, title: _title, ...rest } = p;
    return rest;
  };
  walk(strip(before.policy), strip(after.policy), [], raw);
  // A rule switched off or lowered says whether the committee's acknowledgement for it is in the new file.
  const acknowledged = (c: PolicyChange): PolicyChange => {
    const match = /^(?:indicator of (\S+) lowered|switched off: (\S+))/.exec(c.text);
    const ruleId = match?.[1] ?? match?.[2];
    const change = match?.[1] === undefined ? 'disabled' : 'lowered';
    const found = ruleId !== undefined && (after.acknowledgements ?? []).some((a) => a.ruleId === ruleId && a.change === change);
    return found ? { ...c, text: `${c.text}; acknowledged` } : c;
  };
  const changes = [
    ...raw.filter((d) => !describedSeparately(d)).map((d) => acknowledged(describe(d, before.policy, after.policy))),
    ...describedSections(before.policy, after.policy),
    ...acknowledgementChanges(before.acknowledgements ?? [], after.acknowledgements ?? []),
  ];
  // Stable: within a heading, changes keep the order of the policy file.
  changes.sort((a, b) => HEADINGS.indexOf(a.heading) - HEADINGS.indexOf(b.heading));
  return { old: identityOf(before), new: identityOf(after), identity, changes };
}

/** The diff as text, grouped by heading; "No clinical change." when only the identity differs. */
export function policyDiffText(diff: PolicyDiff): string {
  const name = (p: PolicyIdentity): string => `${p.id} v${p.version}${p.contentHash === undefined ? '' : ` #${p.contentHash.slice(0, SHORT_HASH_LENGTH)}`}`;
  const lines = [`Policy changes from ${name(diff.old)} to ${name(diff.new)}`];
  const all = [...diff.identity, ...diff.changes];
  for (const heading of HEADINGS) {
    const under = all.filter((c) => c.heading === heading);
    if (under.length === 0) continue;
    lines.push('', heading, ...under.map((c) => `  ${c.text}`));
  }
  lines.push(
    '',
    diff.changes.length === 0
      ? 'No clinical change.'
      : `${diff.changes.length} ${diff.changes.length === 1 ? 'change' : 'changes'} besides the identity. ` +
          'policy test and simulate show what they do to the advice; the oxygen committee decides.',
  );
  return `${lines.join('\n')}\n`;
}

/*
 * Sections with wording of their own, compared as the oxygen team reads them rather than key by key:
 * unit overrides by unit name, the device catalogue by device and valve, the guideline each card ends
 * up citing, and override reasons by code. A key added inside these sections later, that none of the
 * functions below reads, still reaches "Other changes" through the structural walk.
 */

/** Key paths the functions below describe; raw differences under them are not shown twice. */
const DESCRIBED_SEPARATELY: readonly string[] = [
  'effectiveFrom',
  'units',
  'devices.flowLimits',
  'devices.venturiSettings',
  'clinicalBasis.guidelineKeys',
  'clinicalBasis.ruleCitations',
  'clinicalBasis.topicCitations',
  'cardWording.folder',
  'overrideReasons.merge',
  'overrideReasons.allCards',
  'overrideReasons.byRule',
];

const describedSeparately = (d: RawDiff): boolean => {
  const key = keyPath(d.path);
  return DESCRIBED_SEPARATELY.some((p) => key === p || key.startsWith(`${p}.`));
};

const range = (r: SaturationRange): string => `${String(r.lowPercent)}–${String(r.highPercent)} %`;
const litres = (n: number): string => `${String(n)} L/min`;
/** "1–4 L/min"; "15 L/min" when a device is run at one flow only. */
const flows = (l: { readonly from: number; readonly to: number }): string => (l.from === l.to ? litres(l.to) : `${String(l.from)}–${litres(l.to)}`);

function effectiveFromChanges(before: Policy, after: Policy): PolicyChange[] {
  if (before.effectiveFrom === after.effectiveFrom) return [];
  const date = (d: string | undefined): string => d ?? 'not stated (in effect once loaded)';
  const kind: PolicyChange['kind'] = before.effectiveFrom === undefined ? 'added' : after.effectiveFrom === undefined ? 'removed' : 'changed';
  return [
    {
      heading: 'When it applies',
      path: 'effectiveFrom',
      kind,
      old: before.effectiveFrom,
      new: after.effectiveFrom,
      text: `effective from: ${date(before.effectiveFrom)} → ${date(after.effectiveFrom)}`,
    },
  ];
}

const UNIT_RANGES = [
  ['standard', 'standard range'],
  ['hypercapnicRisk', 'at-risk range'],
] as const;

function unitRanges(unit: UnitTargets): string {
  const own = UNIT_RANGES.flatMap(([key, label]) => {
    const r = unit.targets[key];
    return r === undefined ? [] : [`${label} ${range(r)}`];
  });
  return own.length === 0 ? 'no range of its own' : own.join(', ');
}

function unitMatchers(unit: UnitTargets): string[] {
  return [
    ...unit.match.names.map((n) => `name "${n}"`),
    ...unit.match.patterns.map((p) => `pattern "${p}"`),
    ...unit.match.locations.map((l) => `location ${l}`),
  ];
}

function unitChanges(before: Policy, after: Policy): PolicyChange[] {
  const heading = 'Unit overrides' as const;
  const out: PolicyChange[] = [];
  const at = (name: string): string => `units[name=${name}]`;
  for (const old of before.units) {
    const now = after.units.find((u) => u.name === old.name);
    if (now === undefined) {
      out.push({
        heading,
        path: at(old.name),
        kind: 'removed',
        old,
        text: `unit removed: ${old.name} (was ${unitRanges(old)}; matched by ${unitMatchers(old).join(', ')}): its patients get the policy's own ranges`,
      });
      continue;
    }
    for (const [key, label] of UNIT_RANGES) {
      const a = old.targets[key];
      const b = now.targets[key];
      if (sameValue(a, b)) continue;
      const words = (r: SaturationRange | undefined, policy: Policy): string =>
        r === undefined ? `the policy's own (${range(policy.targets[key])})` : range(r);
      out.push({
        heading,
        path: `${at(old.name)}.targets.${key}`,
        kind: a === undefined ? 'added' : b === undefined ? 'removed' : 'changed',
        old: a,
        new: b,
        text: `${old.name} ${label}: ${words(a, before)} → ${words(b, after)}${a !== undefined && b !== undefined ? rangeMove(a, b) : ''}`,
      });
    }
    const was = unitMatchers(old);
    const is = unitMatchers(now);
    const added = is.filter((m) => !was.includes(m));
    const removed = was.filter((m) => !is.includes(m));
    if (added.length > 0 || removed.length > 0) {
      const parts = [
        ...(added.length === 0 ? [] : [`now also matched by ${added.join(', ')}`]),
        ...(removed.length === 0 ? [] : [`no longer matched by ${removed.join(', ')}`]),
      ];
      out.push({ heading, path: `${at(old.name)}.match`, kind: 'changed', old: old.match, new: now.match, text: `${old.name}: ${parts.join('; ')}` });
    }
    if (old.basisKey !== now.basisKey) {
      const cites = (key: string | undefined, policy: Policy): string => (key === undefined ? "'local-policy' (the default)" : referenceLabel(policy, key));
      out.push({
        heading,
        path: `${at(old.name)}.basisKey`,
        kind: 'changed',
        old: old.basisKey,
        new: now.basisKey,
        text: `${old.name} cards cite: ${cites(old.basisKey, before)} → ${cites(now.basisKey, after)}`,
      });
    }
  }
  for (const now of after.units) {
    if (before.units.some((u) => u.name === now.name)) continue;
    out.push({
      heading,
      path: at(now.name),
      kind: 'added',
      new: now,
      text: `unit added: ${now.name}: ${unitRanges(now)}; matched by ${unitMatchers(now).join(', ')}`,
    });
  }
  // The first unit that matches wins, so the order of units kept in both files is advice too.
  const kept = (from: Policy, other: Policy): string[] => from.units.map((u) => u.name).filter((n) => other.units.some((u) => u.name === n));
  const oldOrder = kept(before, after);
  const newOrder = kept(after, before);
  if (!sameValue(oldOrder, newOrder)) {
    out.push({
      heading,
      path: 'units',
      kind: 'changed',
      old: oldOrder,
      new: newOrder,
      text: `order the units are tried in (the first that matches wins): ${oldOrder.join(', ')} → ${newOrder.join(', ')}`,
    });
  }
  return out;
}

// Percent from a fraction without binary noise: 0.28 is 28 %, as the valves are labelled.
const valvePercent = (fraction: number): number => Math.round(fraction * 1000) / 10;

function deviceChanges(before: Policy, after: Policy): PolicyChange[] {
  const heading = 'Devices stocked' as const;
  const out: PolicyChange[] = [];
  for (const kind of DEVICE_KINDS) {
    if (kind === 'venturi-mask') continue;
    const a = before.devices.flowLimits[kind];
    const b = after.devices.flowLimits[kind];
    if (sameValue(a, b)) continue;
    const label = DEVICE_MODELS[kind].label;
    const path = `devices.flowLimits.${kind}`;
    if (a === undefined && b !== undefined) {
      out.push({ heading, path, kind: 'added', new: b, text: `now stocked: ${label}, ${flows(b)}` });
    } else if (a !== undefined && b === undefined) {
      out.push({
        heading,
        path,
        kind: 'removed',
        old: a,
        text: `no longer stocked: ${label} (was ${flows(a)}): no card offers it; an order for it is still checked`,
      });
    } else if (a !== undefined && b !== undefined) {
      out.push({ heading, path, kind: 'changed', old: a, new: b, text: `${label} flow limits: ${flows(a)} → ${flows(b)}` });
    }
  }
  const valves = (p: Policy): { percent: number; minimumFlowLPerMin: number }[] =>
    p.devices.venturiSettings.map((v) => ({ percent: valvePercent(v.fio2Fraction), minimumFlowLPerMin: v.minimumFlowLPerMin }));
  const was = valves(before);
  const is = valves(after);
  const valveWords = (list: readonly { percent: number; minimumFlowLPerMin: number }[]): string =>
    list.map((v) => `${String(v.percent)} % (O2 at least ${litres(v.minimumFlowLPerMin)})`).join(', ');
  if (was.length > 0 && is.length === 0) {
    out.push({
      heading,
      path: 'devices.venturiSettings',
      kind: 'removed',
      old: was,
      text: `no longer stocked: Venturi mask (was valves ${valveWords(was)}): no card offers it; an order for it is still checked`,
    });
  } else if (was.length === 0 && is.length > 0) {
    out.push({ heading, path: 'devices.venturiSettings', kind: 'added', new: is, text: `now stocked: Venturi mask, valves ${valveWords(is)}` });
  } else {
    for (const v of was) {
      const now = is.find((w) => w.percent === v.percent);
      const path = `devices.venturiSettings[fio2Percent=${String(v.percent)}]`;
      if (now === undefined) {
        out.push({ heading, path, kind: 'removed', old: v, text: `Venturi valve no longer stocked: ${valveWords([v])}: no card offers it` });
      } else if (now.minimumFlowLPerMin !== v.minimumFlowLPerMin) {
        out.push({
          heading,
          path,
          kind: 'changed',
          old: v,
          new: now,
          text: `Venturi ${String(v.percent)} % valve, minimum O2 flow: ${litres(v.minimumFlowLPerMin)} → ${litres(now.minimumFlowLPerMin)}`,
        });
      }
    }
    for (const v of is) {
      if (was.some((w) => w.percent === v.percent)) continue;
      out.push({ heading, path: `devices.venturiSettings[fio2Percent=${String(v.percent)}]`, kind: 'added', new: v, text: `Venturi valve now stocked: ${valveWords([v])}` });
    }
  }
  return out;
}

function labelOnly(policy: Policy, key: string): string {
  return policy.references[key]?.label ?? `'${key}'`;
}

function clinicalBasisChanges(before: Policy, after: Policy): PolicyChange[] {
  const heading = 'What the cards cite' as const;
  const out: PolicyChange[] = [];
  const path = 'clinicalBasis.guidelineKeys';
  for (const key of before.clinicalBasis.guidelineKeys) {
    if (!after.clinicalBasis.guidelineKeys.includes(key)) {
      out.push({ heading, path, kind: 'removed', old: key, text: `guideline no longer followed: ${referenceLabel(before, key)}` });
    }
  }
  for (const key of after.clinicalBasis.guidelineKeys) {
    if (!before.clinicalBasis.guidelineKeys.includes(key)) {
      out.push({ heading, path, kind: 'added', new: key, text: `guideline followed added: ${referenceLabel(after, key)}` });
    }
  }
  // What each card ends up citing (its own citation, else the primary), so a change of primary shows
  // on the cards it moves and not on those that keep citing the same guideline.
  const cites = (p: Policy, ruleId: string): string => p.clinicalBasis.ruleCitations[ruleId] ?? p.basisKey;
  const ruleIds = [
    ...new Set([...registeredRuleIds(), ...Object.keys(before.clinicalBasis.ruleCitations), ...Object.keys(after.clinicalBasis.ruleCitations)]),
  ].sort();
  const moves = new Map<string, { from: string; to: string; ruleIds: string[] }>();
  for (const ruleId of ruleIds) {
    // A rule the new file switches off gives no cards, so what they would cite is no change to report.
    if (after.disabledRules.includes(ruleId)) continue;
    const from = cites(before, ruleId);
    const to = cites(after, ruleId);
    if (from === to) continue;
    const move = moves.get(`${from}\n${to}`) ?? { from, to, ruleIds: [] };
    move.ruleIds.push(ruleId);
    moves.set(`${from}\n${to}`, move);
  }
  for (const move of moves.values()) {
    const n = move.ruleIds.length;
    out.push({
      heading,
      path: 'clinicalBasis.ruleCitations',
      kind: 'changed',
      old: { guideline: move.from, ruleIds: move.ruleIds },
      new: { guideline: move.to, ruleIds: move.ruleIds },
      text: `the cards of ${n} ${n === 1 ? 'rule' : 'rules'} now cite ${labelOnly(after, move.to)} instead of ${labelOnly(before, move.from)}: ${move.ruleIds.join(', ')}`,
    });
  }
  for (const topic of GUIDELINE_TOPICS) {
    const from = before.clinicalBasis.topicCitations[topic] ?? before.basisKey;
    const to = after.clinicalBasis.topicCitations[topic] ?? after.basisKey;
    if (from === to) continue;
    out.push({
      heading,
      path: `clinicalBasis.topicCitations.${topic}`,
      kind: 'changed',
      old: from,
      new: to,
      text: `${topic} thresholds cite: ${labelOnly(before, from)} → ${labelOnly(after, to)}`,
    });
  }
  return out;
}

function reasonChanges(where: string, path: string, a: readonly OverrideReasonText[], b: readonly OverrideReasonText[]): PolicyChange[] {
  const heading = 'Card wording and override reasons' as const;
  const words = (r: OverrideReasonText): string => `"${r.display}" (${r.code})`;
  const out: PolicyChange[] = [];
  for (const r of a) {
    const now = b.find((x) => x.code === r.code);
    if (now === undefined) {
      out.push({ heading, path: `${path}[code=${r.code}]`, kind: 'removed', old: r, text: `override reason on ${where} removed: ${words(r)}` });
    } else if (now.display !== r.display) {
      out.push({
        heading,
        path: `${path}[code=${r.code}]`,
        kind: 'changed',
        old: r,
        new: now,
        text: `override reason on ${where} reworded: ${r.code}: "${r.display}" → "${now.display}"`,
      });
    }
  }
  for (const r of b) {
    if (!a.some((x) => x.code === r.code)) {
      out.push({ heading, path: `${path}[code=${r.code}]`, kind: 'added', new: r, text: `override reason on ${where} added: ${words(r)}` });
    }
  }
  return out;
}

function cardChanges(before: Policy, after: Policy): PolicyChange[] {
  const heading = 'Card wording and override reasons' as const;
  const out: PolicyChange[] = [];
  const a = before.cardWording.folder;
  const b = after.cardWording.folder;
  if (a !== b) {
    const folder = (f: string | undefined): string => (f === undefined ? 'none (the bundled wording)' : `'${f}'`);
    out.push({
      heading,
      path: 'cardWording.folder',
      kind: a === undefined ? 'added' : b === undefined ? 'removed' : 'changed',
      old: a,
      new: b,
      text: `local card wording folder: ${folder(a)} → ${folder(b)}`,
    });
  }
  const merge = { add: "add (after each card file's own reasons)", replace: "replace (instead of the card file's, for a rule the policy gives any)" };
  if (before.overrideReasons.merge !== after.overrideReasons.merge) {
    out.push({
      heading,
      path: 'overrideReasons.merge',
      kind: 'changed',
      old: before.overrideReasons.merge,
      new: after.overrideReasons.merge,
      text: `override reasons merged by: ${merge[before.overrideReasons.merge]} → ${merge[after.overrideReasons.merge]}`,
    });
  }
  out.push(...reasonChanges('every card', 'overrideReasons.allCards', before.overrideReasons.allCards, after.overrideReasons.allCards));
  const ruleIds = [...new Set([...Object.keys(before.overrideReasons.byRule), ...Object.keys(after.overrideReasons.byRule)])].sort();
  for (const ruleId of ruleIds) {
    out.push(
      ...reasonChanges(
        `${ruleId} cards`,
        `overrideReasons.byRule.${ruleId}`,
        before.overrideReasons.byRule[ruleId] ?? [],
        after.overrideReasons.byRule[ruleId] ?? [],
      ),
    );
  }
  return out;
}

function describedSections(before: Policy, after: Policy): PolicyChange[] {
  return [
    ...effectiveFromChanges(before, after),
    ...unitChanges(before, after),
    ...deviceChanges(before, after),
    ...clinicalBasisChanges(before, after),
    ...cardChanges(before, after),
  ];
}
