import { rule as acuteHypercapnicAcidosis } from './acute-hypercapnic-acidosis.js';
import { rule as adultChecksOnly } from './adult-checks-only.js';
import { rule as bloodGasOverdue } from './blood-gas-overdue.js';
import { rule as carbonMonoxideOximetry } from './carbon-monoxide-oximetry.js';
import { rule as clusterHeadacheOxygen } from './cluster-headache-oxygen.js';
import { rule as dataSetAside } from './data-set-aside.js';
import { rule as duplicateOxygenOrder } from './duplicate-oxygen-order.js';
import { rule as escalatedSupportFailing } from './escalated-support-failing.js';
import { rule as flowOutsideDeviceRange } from './flow-outside-device-range.js';
import { rule as highOxygenRequirement } from './high-oxygen-requirement.js';
import { rule as hypercapniaWithoutChronicRetention } from './hypercapnia-without-chronic-retention.js';
import { rule as lowerRangeWithoutRisk } from './lower-range-without-risk.js';
import { rule as news2Scale2 } from './news2-scale-2.js';
import { rule as noRecentSpo2 } from './no-recent-spo2.js';
import { rule as orderGivesLessOxygen } from './order-gives-less-oxygen.js';
import { rule as oxygenToxicityTarget } from './oxygen-toxicity-target.js';
import { rule as oxygenWithoutHypoxaemia } from './oxygen-without-hypoxaemia.js';
import { rule as oxygenationSummary } from './oxygenation-summary.js';
import { rule as pneumothoraxOxygen } from './pneumothorax-oxygen.js';
import { rule as readyToStepDown } from './ready-to-step-down.js';
import { rule as repeatBloodGasDue } from './repeat-blood-gas-due.js';
import { rule as requiredDataUnavailable } from './required-data-unavailable.js';
import { rule as risingOxygenNeed } from './rising-oxygen-need.js';
import { rule as spo2AboveTarget } from './spo2-above-target.js';
import { rule as spo2BelowTarget } from './spo2-below-target.js';
import { rule as targetAboveHypercapnicRange } from './target-above-hypercapnic-range.js';
import { rule as targetDiffersFromPolicy } from './target-differs-from-policy.js';
import { rule as targetAmbiguous } from './target-ambiguous.js';
import { rule as targetOneSided } from './target-one-sided.js';
import { rule as targetRangeMissing } from './target-range-missing.js';
import { rule as timeAboveTargetOnOxygen } from './time-above-target-on-oxygen.js';
import { rule as timeBelowTarget } from './time-below-target.js';
import { rule as uncontrolledOxygenAtRisk } from './uncontrolled-oxygen-at-risk.js';
import { rule as venturiFlowInsufficient } from './venturi-flow-insufficient.js';
import type { Rule } from './support/rule-types.js';

export type { Rule, RuleContext } from './support/rule-types.js';

/**
 * Every advisory rule, in the order their findings are listed within one indicator. Safety-critical
 * physiology first, then the order's target, then titration, devices, special situations and the
 * informational cards.
 */
export const RULES: readonly Rule[] = [
  acuteHypercapnicAcidosis,
  hypercapniaWithoutChronicRetention,
  carbonMonoxideOximetry,
  escalatedSupportFailing,
  spo2BelowTarget,
  orderGivesLessOxygen,
  targetAboveHypercapnicRange,
  uncontrolledOxygenAtRisk,
  targetRangeMissing,
  targetOneSided,
  targetAmbiguous,
  oxygenToxicityTarget,
  lowerRangeWithoutRisk,
  targetDiffersFromPolicy,
  spo2AboveTarget,
  highOxygenRequirement,
  risingOxygenNeed,
  timeBelowTarget,
  timeAboveTargetOnOxygen,
  readyToStepDown,
  venturiFlowInsufficient,
  flowOutsideDeviceRange,
  duplicateOxygenOrder,
  repeatBloodGasDue,
  bloodGasOverdue,
  news2Scale2,
  pneumothoraxOxygen,
  clusterHeadacheOxygen,
  oxygenWithoutHypoxaemia,
  noRecentSpo2,
  adultChecksOnly,
  requiredDataUnavailable,
  dataSetAside,
  oxygenationSummary,
];
