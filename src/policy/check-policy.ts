import { normaliseUnitName } from '../core/assessment/unit-targets.js';
import { CONDITION_KINDS, type ConditionKind, type Indicator } from '../core/types.js';
import { checkCardSections } from './check-card-sections.js';
import { checkDeviceCatalogue } from './device-catalogue.js';
import { defaultIndicatorOf, nearest, registeredRuleIds, RETIRED_RULE_IDS, SOMETIMES_CRITICAL_RULE_IDS } from './rule-ids.js';

/**
 * The checks that protect patients beyond the schema: a file can have every key right and still aim
 * at-risk patients higher than others, call in-range readings critical, or silence a critical rule by
 * a typo. They read the raw parsed document defensively, so they run even when the schema finds
 * problems elsewhere, and every problem is reported at once. Pure.
 */

export type PolicyPath = readonly (string | number)[];

export interface PolicyCheck {
  readonly level: 'error' | 'warning';
  readonly path: PolicyPath;
  /** What is wrong, in the committee's terms. */
  readonly message: string;
  /** How to put it right. */
  readonly fix: string;
}

const SEVERITY_RANK: Readonly<Record<Indicator, number>> = { info: 0, warning: 1, critical: 2 };

/**
 * Conditions known to carry a risk of hypercapnic respiratory failure. BTS 2017 Table 4: COPD and other
 * fixed airflow obstruction (bronchiectasis), cystic fibrosis, neuromuscular and neurological disease,
 * chest wall deformity (kyphoscoliosis), morbid obesity. BTS 2017 Tables 2–4 (and BTS 2008 Table 3)
 * keep patients with previous NIV or IMV, or previous hypercapnic failure, on 88–92 %; obesity
 * hypoventilation is hypercapnic by definition (common practice). Anything else is a warning, not an
 * error: a committee may have a reason, but it should be a decision, not a slip.
 */
const KNOWN_HYPERCAPNIC_RISK: ReadonlySet<ConditionKind> = new Set<ConditionKind>([
  'copd',
  'bronchiectasis',
  'cystic-fibrosis',
  'neuromuscular-disease',
  'chest-wall-deformity',
  'morbid-obesity',
  'obesity-hypoventilation',
  'chronic-hypercapnic-respiratory-failure',
  'previous-niv-or-imv',
]);

function get(raw: unknown, path: PolicyPath): unknown {
  let value = raw;
  for (const step of path) {
    if (value === null || typeof value !== 'object') return undefined;
    value = (value as Record<string | number, unknown>)[step];
  }
  return value;
}

function num(raw: unknown, path: PolicyPath): number | undefined {
  const value = get(raw, path);
  return typeof value === 'number' && Number.isFinite(value) ? value : undefined;
}

function str(raw: unknown, path: PolicyPath): string | undefined {
  const value = get(raw, path);
  return typeof value === 'string' ? value : undefined;
}

function list(raw: unknown, path: PolicyPath): readonly unknown[] {
  const value = get(raw, path);
  return Array.isArray(value) ? value : [];
}

function entries(raw: unknown, path: PolicyPath): readonly [string, unknown][] {
  const value = get(raw, path);
  return value !== null && typeof value === 'object' && !Array.isArray(value) ? Object.entries(value) : [];
}

interface Range {
  readonly key: (typeof RANGE_KEYS)[number];
  readonly low: number;
  readonly high: number;
  /** Where the range is written: `targets.standard`, or `units.0.targets.standard` for a unit's own. */
  readonly path: PolicyPath;
}

/** The top of the at-risk range in BTS 2017 Table 4 (88–92 %) and TSANZ 2015 (88–92 %). */
const AT_RISK_HIGHEST_PERCENT = 92;

const RANGE_KEYS = ['standard', 'hypercapnicRisk', 'oxygenToxicityRisk'] as const;
/** The ranges a unit may set for itself (schema.ts, UnitSchema). */
const UNIT_RANGE_KEYS = ['standard', 'hypercapnicRisk'] as const;

function readRanges(raw: unknown, prefix: PolicyPath, keys: readonly (typeof RANGE_KEYS)[number][]): Range[] {
  const ranges: Range[] = [];
  for (const key of keys) {
    const path = [...prefix, 'targets', key];
    const low = num(raw, [...path, 'lowPercent']);
    const high = num(raw, [...path, 'highPercent']);
    if (low !== undefined && high !== undefined) ranges.push({ key, low, high, path });
  }
  return ranges;
}

const show = (r: Range): string => `${r.low}–${r.high} %`;
const label = (r: Range): string => r.path.join('.');

/**
 * The range checks over one set of ranges in force together: the policy's own, or one unit's
 * effective ranges (its own where it sets them, the policy's otherwise). `owned` says which ranges a
 * problem may be reported at: for a unit, only its own, so a fault in the policy's ranges is reported
 * once, at the policy's key.
 */
function checkRangeSet(
  ranges: readonly Range[],
  owned: (r: Range) => boolean,
  unitName: string | undefined,
  raw: unknown,
  out: PolicyCheck[],
): void {
  const onUnit = unitName === undefined ? '' : `on unit '${unitName}', `;
  for (const range of ranges.filter(owned)) {
    if (range.low >= range.high) {
      out.push({
        level: 'error',
        path: range.path,
        message: `${onUnit}the range ${show(range)} is not ordered: lowPercent must be below highPercent`,
        fix: 'swap the two bounds, or correct the one that is wrong',
      });
    }
  }
  const standard = ranges.find((r) => r.key === 'standard');
  const atRisk = ranges.find((r) => r.key === 'hypercapnicRisk');
  // Precisely: the at-risk range's upper bound must not exceed the standard range's lower bound. The
  // two may meet at one value (TSANZ 2015: 88–92 % against 92–96 %) but never overlap, and the at-risk
  // range is never the higher one (BTS 2017: 88–92 % against 94–98 %).
  const overlaps = standard !== undefined && atRisk !== undefined && atRisk.high > standard.low;
  if (standard !== undefined && atRisk !== undefined && overlaps && (owned(atRisk) || owned(standard))) {
    out.push({
      level: 'error',
      path: owned(atRisk) ? atRisk.path : standard.path,
      message:
        `${onUnit}the at-risk range ${show(atRisk)} reaches above the lower bound of the standard range ${show(standard)}: ` +
        'a patient at risk of hypercapnic respiratory failure would be given more oxygen than the range for patients not at risk allows',
      fix:
        (unitName !== undefined && !owned(atRisk)
          ? `give the unit its own at-risk range ending at or below ${standard.low} % (${label(standard).replace(/standard$/, 'hypercapnicRisk')})` +
            // Raising the floor is offered only when a range of some width would be left.
            (atRisk.high < standard.high ? `, or raise ${label(standard)}.lowPercent to ${atRisk.high}; ` : '; ')
          : `keep ${label(atRisk)}.highPercent at or below ${label(standard)}.lowPercent (${standard.low}); `) +
        'BTS 2017 uses 88–92 % against 94–98 %, TSANZ 2015 88–92 % against 92–96 %',
    });
  }
  // BTS 2017 Table 4 and TSANZ 2015 both aim patients at risk of hypercapnic respiratory failure at
  // 88–92 %: an at-risk range reaching above 92 % gives CO2 retainers more oxygen than either guideline.
  // A warning, not an error: a committee may have a reason, but it should be a decision, not a slip.
  // Not repeated where the range already overlaps the standard one (an error that says more).
  if (atRisk !== undefined && owned(atRisk) && !overlaps && atRisk.high > AT_RISK_HIGHEST_PERCENT) {
    out.push({
      level: 'warning',
      path: [...atRisk.path, 'highPercent'],
      message:
        `${onUnit}the at-risk range ${show(atRisk)} reaches above ${AT_RISK_HIGHEST_PERCENT} %: ` +
        'patients at risk of hypercapnic respiratory failure would be aimed higher than BTS 2017 Table 4 (88–92 %) and TSANZ 2015 (88–92 %) advise',
      fix: `keep ${label(atRisk)}.highPercent at or below ${AT_RISK_HIGHEST_PERCENT}, unless the oxygen committee has decided otherwise`,
    });
  }
  const critical = num(raw, ['thresholds', 'criticalSpo2BelowPercent']);
  if (critical === undefined) return;
  // SpO2 below the threshold is critical, a range includes its lower bound: the threshold may equal
  // a lower bound (BTS 2017: critical below 85 %, paraquat range from 85 %) but not exceed it.
  if (unitName === undefined) {
    const inside = ranges.filter((r) => critical > r.low);
    if (inside.length > 0) {
      const lowest = Math.min(...ranges.map((r) => r.low));
      out.push({
        level: 'error',
        path: ['thresholds', 'criticalSpo2BelowPercent'],
        message:
          `SpO2 below ${critical} % is called critical, but ${inside.map((r) => `${label(r)} starts at ${r.low} %`).join(', ')}: ` +
          'a patient on target would get a critical card calling for more oxygen',
        fix: `set it at or below the lowest lower bound, ${lowest} % (BTS 2017 Table 2: a reservoir mask below 85 %)`,
      });
    }
    return;
  }
  // The critical threshold holds on every unit (a unit cannot set its own): a unit range starting
  // below it is the unit's problem, reported at its lower bound.
  for (const range of ranges.filter((r) => owned(r) && critical > r.low)) {
    out.push({
      level: 'error',
      path: [...range.path, 'lowPercent'],
      message:
        `${onUnit}${label(range)} starts at ${range.low} %, below the critical threshold ${critical} % ` +
        '(thresholds.criticalSpo2BelowPercent, which holds on every unit): a patient on target would get a critical card calling for more oxygen',
      fix:
        `raise the lower bound to ${critical} % or more, or lower thresholds.criticalSpo2BelowPercent ` +
        '(BTS 2017 Table 2: a reservoir mask below 85 %)',
    });
  }
}

function checkRanges(raw: unknown, out: PolicyCheck[]): void {
  const policyRanges = readRanges(raw, [], RANGE_KEYS);
  checkRangeSet(policyRanges, () => true, undefined, raw, out);
  list(raw, ['units']).forEach((unit, index) => {
    const own = readRanges(raw, ['units', index], UNIT_RANGE_KEYS);
    const effective = RANGE_KEYS.flatMap((key) => own.find((r) => r.key === key) ?? policyRanges.filter((r) => r.key === key));
    checkRangeSet(effective, (r) => own.includes(r), str(unit, ['name']) ?? `#${index + 1}`, raw, out);
  });
}

/**
 * A unit list the engine can read one way only: unique unit names, no exact name or location given to
 * two units (the first would always win, so the second entry would never apply), and a `basis` that
 * names a reference. Patterns may overlap; the first unit listed wins (docs/policy.md).
 */
function checkUnits(raw: unknown, out: PolicyCheck[]): void {
  const names = new Map<string, number>();
  const claimed = new Map<string, { readonly unit: number; readonly what: string }>();
  const references = entries(raw, ['references']).map(([key]) => key);
  list(raw, ['units']).forEach((unit, index) => {
    const name = str(unit, ['name']);
    if (name !== undefined) {
      const first = names.get(name.trim().toLowerCase());
      if (first !== undefined) {
        out.push({
          level: 'error',
          path: ['units', index, 'name'],
          message: `a second unit named '${name}' (the first is units.${first})`,
          fix: 'give each unit its own name, or merge the two entries',
        });
      } else {
        names.set(name.trim().toLowerCase(), index);
      }
    }
    for (const field of ['names', 'locations'] as const) {
      list(unit, ['match', field]).forEach((entry, at) => {
        if (typeof entry !== 'string') return;
        const key = `${field}\n${field === 'names' ? normaliseUnitName(entry) : entry.trim()}`;
        const earlier = claimed.get(key);
        if (earlier !== undefined && earlier.unit !== index) {
          out.push({
            level: 'error',
            path: ['units', index, 'match', field, at],
            message: `'${entry}' is also matched by units.${earlier.unit}, listed first, so this entry would never apply`,
            fix: 'keep it under one unit only',
          });
        } else if (earlier === undefined) {
          claimed.set(key, { unit: index, what: entry });
        }
      });
    }
    const basis = str(unit, ['basis']);
    if (basis !== undefined && get(raw, ['references']) !== undefined && !references.includes(basis)) {
      out.push({
        level: 'error',
        path: ['units', index, 'basis'],
        message: `'${basis}' is not a key of references`,
        fix: 'name one of the references, or add the source of the unit\'s ranges under references',
      });
    }
  });
}

function checkPh(raw: unknown, out: PolicyCheck[]): void {
  const acidosis = num(raw, ['thresholds', 'acidosisPhBelow']);
  const niv = num(raw, ['thresholds', 'nivPhBelow']);
  const invasive = num(raw, ['thresholds', 'invasiveVentilationPhBelow']);
  if (niv !== undefined && acidosis !== undefined && niv > acidosis) {
    out.push({
      level: 'error',
      path: ['thresholds', 'nivPhBelow'],
      message: 'must not be above thresholds.acidosisPhBelow',
      fix: 'NIV is considered in acidosis: set it at or below thresholds.acidosisPhBelow (BTS/ICS 2016: both 7.35)',
    });
  }
  if (invasive !== undefined && niv !== undefined && invasive > niv) {
    out.push({
      level: 'error',
      path: ['thresholds', 'invasiveVentilationPhBelow'],
      message: 'must not be above thresholds.nivPhBelow',
      fix: 'invasive ventilation is considered at a lower pH than NIV (BTS/ICS 2016: 7.25 against 7.35)',
    });
  }
}

function checkBasis(raw: unknown, out: PolicyCheck[]): void {
  const basis = str(raw, ['basis']);
  const references = entries(raw, ['references']).map(([key]) => key);
  if (basis !== undefined && get(raw, ['references']) !== undefined && !references.includes(basis)) {
    out.push({
      level: 'error',
      path: ['basis'],
      message: `'${basis}' is not a key of references`,
      fix: `name one of the references (${references.slice(0, 3).join(', ')}, ...), or add the guideline under references`,
    });
  }
}

/** A problem with a rule id, or undefined when the id is registered. */
function ruleIdProblem(id: string, path: PolicyPath): PolicyCheck | undefined {
  if (defaultIndicatorOf(id) !== undefined) return undefined;
  const retired = RETIRED_RULE_IDS[id];
  if (retired !== undefined) {
    return {
      level: 'error',
      path,
      message: `'${id}' is a retired rule id: no rule runs under it; its checks are now made by '${retired.replacedBy}'`,
      fix: `name '${retired.replacedBy}' instead, or remove the entry`,
    };
  }
  const guess = nearest(id, registeredRuleIds());
  return {
    level: 'error',
    path,
    message: `'${id}' is not a rule id, so this entry would change nothing`,
    fix: `${guess === undefined ? '' : `did you mean '${guess}'? `}the rule ids are the section headings of docs/clinical-basis.md`,
  };
}

interface Change {
  readonly ruleId: string;
  readonly change: 'disabled' | 'lowered';
  readonly path: PolicyPath;
  readonly words: string;
}

function checkRules(raw: unknown, out: PolicyCheck[]): void {
  const changes: Change[] = [];
  list(raw, ['disabledRules']).forEach((id, index) => {
    if (typeof id !== 'string') return;
    const problem = ruleIdProblem(id, ['disabledRules', index]);
    if (problem !== undefined) out.push(problem);
    else changes.push({ ruleId: id, change: 'disabled', path: ['disabledRules', index], words: 'switches it off' });
  });
  for (const [id, indicator] of entries(raw, ['severity'])) {
    const problem = ruleIdProblem(id, ['severity', id]);
    const byDefault = defaultIndicatorOf(id);
    if (problem !== undefined) out.push(problem);
    else if (byDefault !== undefined && (indicator === 'info' || indicator === 'warning' || indicator === 'critical')) {
      // Lowered below its default, or, for a rule that is sometimes critical, held below critical: a
      // severity entry replaces the indicator of every card the rule makes.
      const sometimesCritical = SOMETIMES_CRITICAL_RULE_IDS.includes(id) && indicator !== 'critical';
      if (SEVERITY_RANK[indicator] < SEVERITY_RANK[byDefault] || sometimesCritical) {
        changes.push({ ruleId: id, change: 'lowered', path: ['severity', id], words: `lowers it to ${indicator}` });
      }
    }
  }
  const acknowledgements = list(raw, ['acknowledgements']);
  const used = new Set<number>();
  for (const change of changes) {
    const index = acknowledgements.findIndex(
      (a) => str(a, ['ruleId']) === change.ruleId && str(a, ['change']) === change.change,
    );
    if (index >= 0) {
      used.add(index);
      continue;
    }
    if (SOMETIMES_CRITICAL_RULE_IDS.includes(change.ruleId)) {
      // Not critical by default, so a warning rather than an error: the file is used, the committee told.
      out.push({
        level: 'warning',
        path: change.path,
        message:
          `'${change.ruleId}' gives a critical card in some situations (docs/clinical-basis.md); ` +
          `this file ${change.words}, which hides those critical cards`,
        fix:
          'remove the entry, or record the decision: acknowledgements: ' +
          `[{ ruleId: ${change.ruleId}, change: ${change.change}, reason: "...", by: "...", date: YYYY-MM-DD }]`,
      });
      continue;
    }
    if (defaultIndicatorOf(change.ruleId) !== 'critical') continue;
    out.push({
      level: 'error',
      path: change.path,
      message: `'${change.ruleId}' gives critical cards by default; this file ${change.words} without a recorded acknowledgement`,
      fix:
        'keep the rule as it is, or record the decision: acknowledgements: ' +
        `[{ ruleId: ${change.ruleId}, change: ${change.change}, reason: "...", by: "...", date: YYYY-MM-DD }]`,
    });
  }
  acknowledgements.forEach((ack, index) => {
    const id = str(ack, ['ruleId']);
    if (id === undefined) return;
    const problem = ruleIdProblem(id, ['acknowledgements', index, 'ruleId']);
    if (problem !== undefined) {
      out.push(problem);
    } else if (!used.has(index)) {
      out.push({
        level: 'warning',
        path: ['acknowledgements', index],
        message: `acknowledges that '${id}' is ${str(ack, ['change']) ?? 'changed'}, but the file makes no such change`,
        fix: 'remove the acknowledgement, or make the change it records',
      });
    }
  });
}

function checkHypercapnicConditions(raw: unknown, out: PolicyCheck[]): void {
  list(raw, ['hypercapnicRisk', 'conditions']).forEach((kind, index) => {
    // An unknown kind is the schema's error; only a known kind that carries no known risk is warned of.
    const known = CONDITION_KINDS.find((k) => k === kind);
    if (known === undefined || KNOWN_HYPERCAPNIC_RISK.has(known)) return;
    out.push({
      level: 'warning',
      path: ['hypercapnicRisk', 'conditions', index],
      message:
        `'${known}' is not known to carry a risk of hypercapnic respiratory failure (BTS 2017 Table 4); ` +
        'listed here it moves these patients to the lower at-risk range',
      fix: 'remove it, unless the oxygen committee has decided these patients need the at-risk range',
    });
  });
}

/** Every check beyond the schema, errors and warnings together, in file order of the checks. */
export function checkPolicy(raw: unknown): PolicyCheck[] {
  const out: PolicyCheck[] = [];
  checkBasis(raw, out);
  checkRanges(raw, out);
  checkUnits(raw, out);
  checkPh(raw, out);
  checkHypercapnicConditions(raw, out);
  checkRules(raw, out);
  out.push(...checkCardSections(raw));
  checkDeviceCatalogue(raw, out);
  return out;
}
