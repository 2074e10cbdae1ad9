import { oncePerObject } from '../once-per-object.js';
import type { Policy, UnitTargets } from '../policy.js';
import type { Facts } from '../types.js';

/**
 * Unit overrides (policy `units`): which unit's targets apply to the patient's encounter, and the
 * policy the rules then read. Resolved once per call by the engine, so every rule and the target
 * selection see the same effective `targets` (one source of truth). Pure.
 */

/** Where the patient is, as the record gives it. */
export interface EncounterLocation {
  /** The location's name (`Facts.encounterUnit`), e.g. "Larkspur Bay General Hospital, Intensive Care Unit". */
  readonly name: string | undefined;
  /** References and identifiers of the current location (`Facts.encounterLocationIds`). */
  readonly ids: readonly string[];
}

export type UnitMatch =
  | {
      readonly kind: 'matched';
      readonly unit: UnitTargets;
      /** Position in the policy's `units` list (0-based). */
      readonly index: number;
      /** What matched, in words: "name 'Intensive Care Unit'", "pattern '*ICU*'", "location 'Location/icu'". */
      readonly matchedBy: string;
      /** Names of later units that also match; the first listed wins (docs/policy.md). */
      readonly alsoMatched: readonly string[];
    }
  | {
      readonly kind: 'none';
      /** `no-units`: the policy has none; `no-location`: the record names no location; `no-match`. */
      readonly reason: 'no-units' | 'no-location' | 'no-match';
    };

/** Lower case, trimmed, inner runs of spaces as one: how a ward clerk's spacing and capitals are ignored. */
export function normaliseUnitName(name: string): string {
  return name.trim().replace(/\s+/g, ' ').toLowerCase();
}

/** A name pattern as a whole-name, case-blind test; `*` stands for any text, everything else is literal. */
function patternRegExp(pattern: string): RegExp {
  const body = normaliseUnitName(pattern)
    .split('*')
    .map((part) => part.replace(/[.+?^${}()|[\]\\]/g, '\\$&'))
    .join('.*');
  return new RegExp(`^${body}$`);
}

/** A unit's names normalised and its patterns compiled, each once per unit (a policy is frozen once loaded). */
interface UnitMatcher {
  readonly names: readonly { readonly written: string; readonly normalised: string }[];
  readonly patterns: readonly { readonly written: string; readonly test: RegExp }[];
}

const matcherOf = oncePerObject(
  (match: UnitTargets['match']): UnitMatcher => ({
    names: match.names.map((written) => ({ written, normalised: normaliseUnitName(written) })),
    patterns: match.patterns.map((written) => ({ written, test: patternRegExp(written) })),
  }),
);

/**
 * How one unit matches the location, or undefined. Exact names first, then patterns, then ids.
 * `normalisedName` is the location's name through `normaliseUnitName`, worked out once per lookup.
 */
function howMatched(unit: UnitTargets, normalisedName: string | undefined, ids: readonly string[]): string | undefined {
  if (normalisedName !== undefined) {
    const { names, patterns } = matcherOf(unit.match);
    const exact = names.find((n) => n.normalised === normalisedName);
    if (exact !== undefined) return `name '${exact.written}'`;
    const pattern = patterns.find((p) => p.test.test(normalisedName));
    if (pattern !== undefined) return `pattern '${pattern.written}'`;
  }
  const id = unit.match.locations.find((l) => ids.includes(l));
  return id === undefined ? undefined : `location '${id}'`;
}

/**
 * The unit whose targets apply: the first in the policy's list that matches the location's name or
 * ids. Overlapping units are allowed (a pattern may overlap an exact name elsewhere) and resolved by
 * order, and the later matches are named so `policy show` can say so; the same exact name or location
 * in two units is refused when the file is validated (src/policy/check-policy.ts).
 */
export function matchUnit(units: readonly UnitTargets[], location: EncounterLocation): UnitMatch {
  if (units.length === 0) return { kind: 'none', reason: 'no-units' };
  if (location.name === undefined && location.ids.length === 0) return { kind: 'none', reason: 'no-location' };
  const normalisedName = location.name === undefined ? undefined : normaliseUnitName(location.name);
  let first: { readonly unit: UnitTargets; readonly index: number; readonly matchedBy: string } | undefined;
  const alsoMatched: string[] = [];
  for (let index = 0; index < units.length; index += 1) {
    const unit = units[index] as UnitTargets;
    const matchedBy = howMatched(unit, normalisedName, location.ids);
    if (matchedBy === undefined) continue;
    if (first === undefined) first = { unit, index, matchedBy };
    else alsoMatched.push(unit.name);
  }
  if (first === undefined) return { kind: 'none', reason: 'no-match' };
  return { kind: 'matched', unit: first.unit, index: first.index, matchedBy: first.matchedBy, alsoMatched };
}

/**
 * The effective policy of each unit, made once per base policy and unit: every call from one ward
 * gets the same object back, so what is built once per policy object downstream (WeakMap caches in
 * the engine and the card builder) is built once per unit too, not again on every call.
 */
const unitPolicies = oncePerObject((): Map<UnitTargets, Policy> => new Map());

/** The policy with the matched unit's ranges in `targets`; the same policy when no unit matched. */
export function policyForUnit(policy: Policy, match: UnitMatch): Policy {
  if (match.kind === 'none') return policy;
  const made = unitPolicies(policy);
  let effective = made.get(match.unit);
  if (effective === undefined) {
    effective = unitPolicy(policy, match.unit);
    made.set(match.unit, effective);
  }
  return effective;
}

function unitPolicy(policy: Policy, unit: UnitTargets): Policy {
  const { standard, hypercapnicRisk } = unit.targets;
  // Frozen like the parsed policy it comes from: it is shared by every call from the unit.
  return Object.freeze({
    ...policy,
    targets: Object.freeze({
      standard: standard ?? policy.targets.standard,
      hypercapnicRisk: hypercapnicRisk ?? policy.targets.hypercapnicRisk,
      // Not a unit's to set: the range that limits oxygen for paraquat or bleomycin (BTS 2017 Table 3).
      oxygenToxicityRisk: policy.targets.oxygenToxicityRisk,
    }),
  });
}

/** The encounter's location as the facts give it. */
export function encounterLocation(facts: Facts): EncounterLocation {
  return { name: facts.encounterUnit, ids: facts.encounterLocationIds ?? [] };
}

/** The unit that matched the encounter and the policy the rules read for it. */
export function policyForEncounter(policy: Policy, facts: Facts): { readonly policy: Policy; readonly unit: UnitMatch } {
  const unit = matchUnit(policy.units, encounterLocation(facts));
  return { policy: policyForUnit(policy, unit), unit };
}

/**
 * Words for a card when a unit set the range the patient's target came from, e.g.
 * "ICU target (local policy)"; undefined when the policy's own range applies.
 */
export function unitTargetWords(match: UnitMatch, range: 'standard' | 'hypercapnicRisk'): string | undefined {
  if (match.kind === 'none' || match.unit.targets[range] === undefined) return undefined;
  return `${match.unit.name} ${range === 'standard' ? 'target' : 'at-risk target'} (local policy)`;
}
