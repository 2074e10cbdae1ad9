import { matchUnit, policyForUnit, type UnitMatch } from '../core/assessment/unit-targets.js';
import type { Policy, UnitTargets } from '../core/policy.js';
import type { Indicator, SaturationRange } from '../core/types.js';
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
  };
}
