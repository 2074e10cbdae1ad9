import { matchUnit, policyForUnit, type UnitMatch } from '../core/assessment/unit-targets.js';
import { DEVICE_MODELS, VENTURI_SETTINGS } from '../core/devices/index.js';
import type { FlowLimitsLPerMin, OverrideReasonText, Policy, UnitTargets } from '../core/policy.js';
import { DEVICE_KINDS, type DeviceKind, type Indicator, type SaturationRange } from '../core/types.js';
import { GUIDELINE_TOPICS, type GuidelineTopic } from '../policy/card-sections-schema.js';
import { policyInEffect, type PolicyInEffect } from '../policy/effective-from.js';
import type { PolicyAcknowledgement } from '../policy/parse-policy.js';

/**
 * What `policy show` shows: the effective targets and thresholds of a policy, for the policy as a
 * whole or for one unit. The same object is printed as `--json` and laid out as the text table, so the
 * two never disagree. Pure.
 */

/** Who set a range: the policy itself, or a unit override by its name. */
export type SetBy = { readonly by: 'policy' } | { readonly by: 'unit'; readonly unit: string };

export interface ShownRange extends SaturationRange {
  readonly setBy: SetBy;
}

export interface UnitAsked {
  /** The name (or location reference or identifier) given with `--unit`. */
  readonly asked: string;
  readonly match: UnitMatch;
}

/** One device kind in the catalogue: stocked or not, and for every kind but the Venturi mask its flow limits. */
export interface DeviceKindView {
  readonly kind: DeviceKind;
  /** The device model's plain label, e.g. "Nasal cannula". */
  readonly label: string;
  /** Not stocked: no card offers it; an order for it is still checked against the model's range. */
  readonly stocked: boolean;
  /** The hospital's flow limits; undefined for the Venturi mask (its valves set its flows) and unstocked kinds. */
  readonly flowLPerMin: FlowLimitsLPerMin | undefined;
}

export interface VenturiValveView {
  /** The valve's setting as labelled, e.g. 28 for the 28 % valve. */
  readonly fio2Percent: number;
  readonly minimumFlowLPerMin: number;
}

export interface DeviceCatalogueView {
  /** Every device kind the service knows, in its usual order. */
  readonly kinds: readonly DeviceKindView[];
  /** The Venturi valves stocked, ascending by setting. */
  readonly venturiValves: readonly VenturiValveView[];
  /** The usual valve settings (24, 28, 31, 35, 40, 50, 60 %) the hospital does not stock, percent. */
  readonly usualVenturiValvesNotStocked: readonly number[];
}

export interface GuidelineView {
  readonly key: string;
  /** The reference's label, e.g. "BTS 2017"; undefined when the key names no reference. */
  readonly label: string | undefined;
}

export interface ClinicalBasisView {
  /** The guidelines the policy follows, the primary first. */
  readonly guidelines: readonly (GuidelineView & { readonly primary: boolean })[];
  /** The guidelines other than the primary that some rules' cards cite, each with those rules (sorted). */
  readonly citedForRules: readonly (GuidelineView & { readonly ruleIds: readonly string[] })[];
  /** Each topic a card may cite, with the guideline it cites and whether the policy names it or the primary stands. */
  readonly topics: readonly (GuidelineView & { readonly topic: GuidelineTopic; readonly setBy: 'policy' | 'primary' })[];
}

export interface OverrideReasonsView {
  readonly merge: 'add' | 'replace';
  readonly allCards: readonly OverrideReasonText[];
  /** Per rule, in rule-id order, the reasons the policy offers on that rule's card. */
  readonly byRule: readonly { readonly ruleId: string; readonly count: number; readonly reasons: readonly OverrideReasonText[] }[];
}

export interface PolicyView {
  readonly policy: {
    readonly id: string;
    readonly version: string;
    readonly title: string;
    readonly basis: { readonly key: string; readonly label: string | undefined; readonly citation: string | undefined };
    readonly site: Policy['site'];
    readonly effectiveFrom: string | undefined;
    readonly inEffect: PolicyInEffect;
  };
  /** Present with `--unit`: which override matched, or why none did. */
  readonly unit: UnitAsked | undefined;
  readonly targets: {
    readonly standard: ShownRange;
    readonly hypercapnicRisk: ShownRange;
    /** Never a unit's to set (BTS 2017 Table 3). */
    readonly oxygenToxicityRisk: ShownRange;
  };
  readonly hypercapnicRisk: Policy['hypercapnicRisk'];
  readonly specialConditions: Policy['specialConditions'];
  readonly population: Policy['population'];
  readonly thresholds: Policy['thresholds'];
  readonly freshness: Policy['freshness'];
  readonly titrationReview: Policy['titrationReview'];
  readonly rules: {
    readonly disabled: readonly string[];
    readonly indicatorsChanged: Readonly<Record<string, Indicator>>;
  };
  readonly acknowledgements: readonly PolicyAcknowledgement[];
  /** Every unit override in the file, in the order they are tried. */
  readonly units: readonly UnitTargets[];
  /** The devices the hospital stocks (policy `devices`). */
  readonly devices: DeviceCatalogueView;
  /** What the cards cite (policy `clinicalBasis`). */
  readonly clinicalBasis: ClinicalBasisView;
  /** The folder of local card wording, relative to the policy file; undefined: the bundled wording. */
  readonly cardWording: { readonly folder: string | undefined };
  /** The override reasons the policy adds to, or puts instead of, each card file's. */
  readonly overrideReasons: OverrideReasonsView;
}

// Percent from a fraction without binary noise: 0.28 is 28 %, as the valves are labelled.
const percentOf = (fraction: number): number => Math.round(fraction * 1000) / 10;

export function deviceCatalogueView(policy: Policy): DeviceCatalogueView {
  const { flowLimits, venturiSettings } = policy.devices;
  const venturiValves = venturiSettings.map((s) => ({ fio2Percent: percentOf(s.fio2Fraction), minimumFlowLPerMin: s.minimumFlowLPerMin }));
  const kinds = DEVICE_KINDS.map((kind): DeviceKindView => {
    const limits = kind === 'venturi-mask' ? undefined : flowLimits[kind];
    const stocked = kind === 'venturi-mask' ? venturiValves.length > 0 : limits !== undefined;
    return { kind, label: DEVICE_MODELS[kind].label, stocked, flowLPerMin: limits === undefined ? undefined : { from: limits.from, to: limits.to } };
  });
  const usualVenturiValvesNotStocked = VENTURI_SETTINGS.map((s) => percentOf(s.fio2Fraction)).filter(
    (percent) => !venturiValves.some((v) => v.fio2Percent === percent),
  );
  return { kinds, venturiValves, usualVenturiValvesNotStocked };
}

const guideline = (policy: Policy, key: string): GuidelineView => ({ key, label: policy.references[key]?.label });

export function clinicalBasisView(policy: Policy): ClinicalBasisView {
  const { guidelineKeys, ruleCitations, topicCitations } = policy.clinicalBasis;
  const byKey = new Map<string, string[]>();
  for (const [ruleId, key] of Object.entries(ruleCitations).sort(([a], [b]) => a.localeCompare(b))) {
    // A rule listed with the primary cites what it would cite unlisted: not a different guideline.
    if (key === policy.basisKey) continue;
    byKey.set(key, [...(byKey.get(key) ?? []), ruleId]);
  }
  return {
    guidelines: guidelineKeys.map((key) => ({ ...guideline(policy, key), primary: key === policy.basisKey })),
    citedForRules: [...byKey].map(([key, ruleIds]) => ({ ...guideline(policy, key), ruleIds })),
    topics: GUIDELINE_TOPICS.map((topic) => {
      const key = topicCitations[topic];
      return key === undefined
        ? { ...guideline(policy, policy.basisKey), topic, setBy: 'primary' as const }
        : { ...guideline(policy, key), topic, setBy: 'policy' as const };
    }),
  };
}

function overrideReasonsView(policy: Policy): OverrideReasonsView {
  const { merge, allCards, byRule } = policy.overrideReasons;
  return {
    merge,
    allCards,
    byRule: Object.entries(byRule)
      .sort(([a], [b]) => a.localeCompare(b))
      .map(([ruleId, reasons]) => ({ ruleId, count: reasons.length, reasons })),
  };
}

function shown(range: SaturationRange, unit: UnitMatch, key: 'standard' | 'hypercapnicRisk' | undefined): ShownRange {
  const byUnit = key !== undefined && unit.kind === 'matched' && unit.unit.targets[key] !== undefined;
  return {
    lowPercent: range.lowPercent,
    highPercent: range.highPercent,
    setBy: byUnit && unit.kind === 'matched' ? { by: 'unit', unit: unit.unit.name } : { by: 'policy' },
  };
}

/**
 * The view of `policy`, for the unit named `unitName` when given. The name is tried as the encounter's
 * location name and as a location reference or identifier, as the service would read it from a record.
 */
export function policyView(
  policy: Policy,
  acknowledgements: readonly PolicyAcknowledgement[],
  options: { readonly now: Date; readonly unitName?: string | undefined },
): PolicyView {
  const { unitName } = options;
  const match: UnitMatch =
    unitName === undefined ? { kind: 'none', reason: 'no-location' } : matchUnit(policy.units, { name: unitName, ids: [unitName] });
  const effective = policyForUnit(policy, match);
  const basis = policy.references[policy.basisKey];
  return {
    policy: {
      id: policy.id,
      version: policy.version,
      title: policy.title,
      basis: { key: policy.basisKey, label: basis?.label, citation: basis?.citation },
      site: policy.site,
      effectiveFrom: policy.effectiveFrom,
      inEffect: policyInEffect(policy, options.now),
    },
    unit: unitName === undefined ? undefined : { asked: unitName, match },
    targets: {
      standard: shown(effective.targets.standard, match, 'standard'),
      hypercapnicRisk: shown(effective.targets.hypercapnicRisk, match, 'hypercapnicRisk'),
      oxygenToxicityRisk: shown(effective.targets.oxygenToxicityRisk, match, undefined),
    },
    hypercapnicRisk: policy.hypercapnicRisk,
    specialConditions: policy.specialConditions,
    population: policy.population,
    thresholds: policy.thresholds,
    freshness: policy.freshness,
    titrationReview: policy.titrationReview,
    rules: { disabled: policy.disabledRules, indicatorsChanged: policy.severity },
    acknowledgements,
    units: policy.units,
    devices: deviceCatalogueView(policy),
    clinicalBasis: clinicalBasisView(policy),
    cardWording: { folder: policy.cardWording.folder },
    overrideReasons: overrideReasonsView(policy),
  };
}
