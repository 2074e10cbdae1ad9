import type { Policy } from '../policy.js';
import type { ConditionKind, Facts, OxygenOrder, SaturationRange } from '../types.js';
import { joinWords } from './format.js';
import type {
  ApplicableTarget,
  HypercapnicRiskDecision,
  NoTargetCondition,
  TargetComparison,
  TitrationTarget,
} from './types.js';
import { unitTargetWords, type UnitMatch } from './unit-targets.js';

/**
 * Situations where BTS 2017 sets no SpO2 target, in order of precedence, each with its reason.
 * Carbon monoxide comes first whatever else is present: the oximeter reads carboxyhaemoglobin as
 * oxyhaemoglobin (BTS 2017 Table 1). Pneumothorax (aim for 100 %, Table 2) and cluster headache (high-
 * flow oxygen regardless of SpO2) yield to a documented hypercapnic risk: this service keeps the
 * 88–92 % range then, because an uncontrolled high FiO2 is the harm BTS Table 4 guards against (our
 * decision; see docs/clinical-basis.md).
 */
const NO_TARGET_REASONS: Readonly<Record<NoTargetCondition, string>> = {
  'carbon-monoxide-poisoning':
    'carbon monoxide poisoning: the oximeter cannot tell carboxyhaemoglobin from oxyhaemoglobin',
  pneumothorax: 'pneumothorax under observation: oxygen speeds resorption, aim for 100 %',
  'cluster-headache': 'cluster headache: high-flow oxygen is given whatever the SpO2',
};

const OXYGEN_TOXICITY: readonly ConditionKind[] = ['paraquat-poisoning', 'bleomycin-lung-injury'];

function sameRange(a: SaturationRange, b: SaturationRange): boolean {
  return a.lowPercent === b.lowPercent && a.highPercent === b.highPercent;
}

/**
 * The target that applies (BTS 2017 Tables 1–4): no SpO2 target for carbon monoxide, and for
 * pneumothorax or cluster headache without hypercapnic risk; `targets.oxygenToxicityRisk` for paraquat
 * or bleomycin; `targets.hypercapnicRisk` when at risk, unless the current gas shows PCO2 below
 * `hypercapnicRisk.hypercapniaPaco2` and there is no previous failure, when BTS re-targets to the
 * standard range; otherwise `targets.standard`. Acute hypercapnia with no sign of chronic retention
 * follows `hypercapnicRisk.acuteHypercapniaWithoutRiskTarget`: with `keep` the hypercapnic gas alone
 * does not make the patient at risk (hypercapnic-risk.ts), so the patient's own range stands
 * (basis `standard-despite-acute-hypercapnia`); with `hypercapnic-risk-range` it moves to
 * `targets.hypercapnicRisk`, saying that local policy moved it.
 *
 * `policy` is the effective policy for the encounter's unit (unit-targets.ts): a unit override has
 * already replaced the standard or at-risk range, and `unit` says which, so the reason on the card
 * names it ("ICU target (local policy)") and cites the unit's basis. The special conditions above
 * come first whatever the unit.
 */
export function selectTarget(
  facts: Facts,
  policy: Policy,
  risk: HypercapnicRiskDecision,
  unit: UnitMatch = { kind: 'none', reason: 'no-units' },
): ApplicableTarget {
  const ranged = (
    range: 'standard' | 'hypercapnicRisk',
    target: Omit<Extract<ApplicableTarget, { kind: 'range' }>, 'kind' | 'range'>,
  ): ApplicableTarget => {
    const words = unitTargetWords(unit, range);
    if (words === undefined || unit.kind === 'none') {
      return { kind: 'range', range: policy.targets[range], ...target };
    }
    return {
      kind: 'range',
      range: policy.targets[range],
      basis: target.basis,
      reason: `${words}; ${target.reason}`,
      sourceKey: unit.unit.basisKey ?? 'local-policy',
    };
  };
  const has = (kind: ConditionKind): boolean => facts.conditions.some((c) => c.kind === kind);
  if (has('carbon-monoxide-poisoning')) {
    return {
      kind: 'no-spo2-target',
      condition: 'carbon-monoxide-poisoning',
      reason: NO_TARGET_REASONS['carbon-monoxide-poisoning'],
      sourceKey: 'bts-2017',
    };
  }
  const toxic = facts.conditions.find((c) => OXYGEN_TOXICITY.includes(c.kind));
  if (toxic !== undefined) {
    return {
      kind: 'range',
      range: policy.targets.oxygenToxicityRisk,
      basis: 'oxygen-toxicity-risk',
      reason: `${toxic.display}: oxygen adds to the lung injury`,
      sourceKey: 'bts-2017',
    };
  }
  if (!risk.atRisk) {
    for (const condition of ['pneumothorax', 'cluster-headache'] as const) {
      if (has(condition)) {
        return {
          kind: 'no-spo2-target',
          condition,
          reason: NO_TARGET_REASONS[condition],
          sourceKey: 'bts-2017',
        };
      }
    }
    if (risk.classification.kind === 'acute') {
      // Only reached with `acuteHypercapniaWithoutRiskTarget: keep`: the current gas did not count
      // as a risk (hypercapnic-risk.ts), so the patient's own range stands, and the card says why.
      return ranged('standard', {
        basis: 'standard-despite-acute-hypercapnia',
        reason:
          'acute hypercapnia with no sign of chronic CO2 retention: the range is kept by local policy, ' +
          'since the CO2 comes from tiring, not from oxygen',
        sourceKey: 'local-policy',
      });
    }
    return ranged('standard', {
      basis: 'standard',
      reason: 'no documented risk of hypercapnic respiratory failure',
      sourceKey: policy.basisKey,
    });
  }
  if (risk.currentHypercapnia === false && !risk.previousFailure) {
    return ranged('standard', {
      basis: 'standard-after-normal-gas',
      reason:
        `at risk, but the current gas shows PCO2 below ${policy.hypercapnicRisk.hypercapniaPaco2.display} ` +
        'and there is no previous NIV, IMV or hypercapnic failure',
      sourceKey: 'bts-2017',
    });
  }
  const acuteOnly = risk.classification.kind === 'acute';
  return ranged('hypercapnicRisk', {
    basis: 'hypercapnic-risk',
    reason: acuteOnly
      ? `acute hypercapnia with no sign of chronic CO2 retention (${joinWords(risk.reasons.map((r) => r.evidence))}): ` +
        'local policy moves the range to the at-risk range'
      : `at risk of hypercapnic respiratory failure (${joinWords(risk.reasons.map((r) => r.evidence))})`,
    sourceKey: acuteOnly ? 'local-policy' : 'bts-2017',
  });
}

/** Classifies the ordered target against the applicable one; each outcome has one owning rule. */
export function compareOrderedTarget(
  order: OxygenOrder | undefined,
  target: ApplicableTarget,
  policy: Policy,
): TargetComparison {
  if (order === undefined) {
    return { kind: 'no-order' };
  }
  if (target.kind === 'no-spo2-target') {
    return { kind: 'no-range-applies' };
  }
  const advised = target.range;
  const ordered = order.target === undefined
    ? undefined
    : { lowPercent: order.target.lowPercent, highPercent: order.target.highPercent };
  if (target.basis === 'oxygen-toxicity-risk') {
    return ordered !== undefined && sameRange(ordered, advised)
      ? { kind: 'matches' }
      : { kind: 'toxicity-range-not-ordered', ordered, advised };
  }
  if (ordered === undefined) {
    return { kind: 'missing', advised };
  }
  if (sameRange(ordered, advised)) {
    return { kind: 'matches' };
  }
  if (target.basis === 'hypercapnic-risk' && ordered.highPercent > advised.highPercent) {
    return { kind: 'above-hypercapnic-range', ordered, advised };
  }
  if (target.basis !== 'hypercapnic-risk' && sameRange(ordered, policy.targets.hypercapnicRisk)) {
    return { kind: 'lower-range-without-risk', ordered, advised };
  }
  return { kind: 'differs', ordered, advised };
}

/**
 * The range SpO2 is titrated to: the ordered one (the prescriber may know an individual target),
 * else the applicable one; none without a target. When the ordered range is higher than a range that
 * exists to limit oxygen (hypercapnic risk, BTS 2017 Table 4; paraquat or bleomycin, Table 3), the
 * advised range is used instead: judging SpO2 against the higher range would prompt more oxygen for
 * exactly the patients it can harm. Nor is an ordered range reaching below the applicable one used
 * without a documented reason for it: the at-risk range (88–92 %) ordered with no hypercapnic risk on
 * record, or after a normal gas re-targets to the standard range (comparison
 * `lower-range-without-risk`, BTS 2017 Tables 2–4); any other range with a lower bound below the
 * applicable one (comparison `differs`, 90–94 % without risk, say); and any lower range for acute
 * hypercapnia without chronic retention kept at the patient's range by local policy. The cards that
 * own those comparisons advise the applicable range. SpO2 is then judged against it (basis
 * `applicable-over-lower-ordered`), so hypoxaemia is not passed as "in range" or a mild miss, and
 * accepting the card that raises the range does not change the verdict.
 */
export function selectTitrationTarget(
  order: OxygenOrder | undefined,
  target: ApplicableTarget,
  comparison: TargetComparison,
): TitrationTarget | undefined {
  if (target.kind === 'no-spo2-target') {
    return undefined;
  }
  const orderedIsUnsafeSide =
    comparison.kind === 'above-hypercapnic-range' ||
    (comparison.kind === 'toxicity-range-not-ordered' &&
      comparison.ordered !== undefined &&
      comparison.ordered.highPercent > target.range.highPercent);
  if (orderedIsUnsafeSide) {
    return { range: target.range, basis: 'advised-over-ordered' };
  }
  // A lower range ordered for a tiring patient is most likely the CO2 read as chronic retention:
  // judging SpO2 against it would let hypoxaemia pass in a patient who may be about to tire out.
  // A range reaching lower than the applicable one with no documented reason (the at-risk range with
  // no risk on record or after a normal gas re-targets, BTS 2017 Tables 2-4; any other lower range)
  // has a card advising the applicable range: judging SpO2 against the lower one would call 85 % a
  // mild miss that becomes critical once that card's own suggestion is accepted.
  // A patient at risk of hypercapnia may carry an individual range below 88-92 % (an oxygen alert
  // card); BTS 2017 Tables 2-4 keep that range, so the ordered one stays the titration target there.
  const reachesLower =
    (comparison.kind === 'lower-range-without-risk' || comparison.kind === 'differs') &&
    target.basis !== 'hypercapnic-risk' &&
    comparison.ordered !== undefined &&
    comparison.ordered.lowPercent < target.range.lowPercent;
  const lowerOrderedWithoutReason =
    reachesLower ||
    (target.basis === 'standard-despite-acute-hypercapnia' &&
      order?.target !== undefined &&
      order.target.lowPercent < target.range.lowPercent);
  if (lowerOrderedWithoutReason) {
    return { range: target.range, basis: 'applicable-over-lower-ordered' };
  }
  if (order?.target !== undefined) {
    return {
      range: { lowPercent: order.target.lowPercent, highPercent: order.target.highPercent },
      basis: 'ordered',
    };
  }
  return { range: target.range, basis: 'applicable' };
}
