import {
  BLOOD_GAS_RANGE_DEFAULTS,
  COMPENSATION_ALLOWANCE_MMOL_PER_L,
  expectedBicarbonateMmolPerL,
} from '../physiology/index.js';
import { oncePerObject } from '../once-per-object.js';
import type { Policy } from '../policy.js';
import type { BloodGas, ConditionKind, Facts } from '../types.js';
import { newestFirst } from './current-values.js';
import { formatDuration, formatGasValue, formatNumber, minutesBetween } from './format.js';
import { classifyHypercapnia } from './hypercapnia-classification.js';
import { readingMs, readWithin } from '../time/reading-time.js';
import type { CurrentValues, HypercapnicRiskDecision, RiskReason } from './types.js';

/** Conditions that, when documented, mean a previous episode of hypercapnic failure. */
const PREVIOUS_FAILURE_CONDITIONS: Readonly<Partial<Record<ConditionKind, RiskReason['kind']>>> = {
  'previous-niv-or-imv': 'previous-ventilation',
  'chronic-hypercapnic-respiratory-failure': 'previous-hypercapnic-failure',
};

/** The policy's at-risk conditions as a set, made once per policy (a policy is frozen once loaded). */
const riskConditionSet = oncePerObject(
  (conditions: readonly ConditionKind[]): ReadonlySet<ConditionKind> => new Set(conditions),
);

function describeGasPco2(gas: BloodGas, now: Date): string {
  const label = gas.specimen === 'arterial' ? 'PaCO2' : `${gas.specimen} PCO2`;
  const age = minutesBetween(gas, now);
  const when = age === undefined ? '' : ` ${formatDuration(age)} ago`;
  return `${label} ${formatGasValue(gas, 'paco2') ?? ''}${when}`.trim();
}

function isHypercapnic(gas: BloodGas, policy: Policy): boolean {
  return gas.paco2MmHg !== undefined && gas.paco2MmHg >= policy.hypercapnicRisk.hypercapniaPaco2.mmHg;
}

/**
 * Decides whether the patient is at risk of hypercapnic respiratory failure, with each reason and its
 * evidence. Reasons (BTS 2017 Table 4 unless stated): a condition in `hypercapnicRisk.conditions`;
 * BMI above `hypercapnicRisk.morbidObesityBmiAbove` (when morbid obesity is in that list); the current
 * gas PCO2 at or above `hypercapnicRisk.hypercapniaPaco2`; an earlier gas (today's older gases or a
 * historic one within `freshness.previousHypercapniaDays`) at or above it; and HCO3 above
 * `hypercapnicRisk.chronicBicarbonateAboveMmolPerL` on the current gas unless its pH is above 7.45
 * (long-standing hypercapnia with normal pH, BTS 2017 as quoted secondarily; pH range RCEM), and, on a
 * hypercapnic gas, only when it is also beyond what the acute PCO2 rise explains (at a PCO2 of 10 kPa
 * an acute rise alone gives about 27.5 mmol/L). Previous NIV/IMV, chronic hypercapnic failure or an
 * earlier hypercapnic gas set `previousFailure`, which stops re-targeting to the standard range.
 *
 * The current gas's hypercapnia is classified (`classifyHypercapnia`) against the other reasons. When
 * it is `acute` (no sign of chronic retention: the tiring patient) and
 * `hypercapnicRisk.acuteHypercapniaWithoutRiskTarget` is `keep`, the current gas is not a risk reason:
 * the raised PCO2 comes from tiring, not from oxygen, so it must not move the patient to the
 * controlled-oxygen range (BTS 2017 keeps acute asthma at 94–98 %). The classification says so.
 */
export function assessHypercapnicRisk(
  facts: Facts,
  policy: Policy,
  current: CurrentValues,
  now: Date,
): HypercapnicRiskDecision {
  const riskConditions = riskConditionSet(policy.hypercapnicRisk.conditions);
  const reasons: RiskReason[] = [];
  const seen = new Set<ConditionKind>();
  let previousFailure = false;

  for (const condition of facts.conditions) {
    const failureKind = PREVIOUS_FAILURE_CONDITIONS[condition.kind];
    if (failureKind !== undefined) {
      previousFailure = true;
    }
    if (!riskConditions.has(condition.kind) || seen.has(condition.kind)) {
      continue;
    }
    seen.add(condition.kind);
    reasons.push({
      kind: failureKind ?? 'condition',
      evidence: `${condition.display} (${condition.matchedBy})`,
      condition: condition.kind,
      reference: condition.reference,
    });
  }

  const bmi = facts.patient.bmiKgPerM2;
  if (
    bmi !== undefined &&
    riskConditions.has('morbid-obesity') &&
    bmi > policy.hypercapnicRisk.morbidObesityBmiAbove
  ) {
    reasons.push({
      kind: 'raised-bmi',
      evidence: `BMI ${formatNumber(bmi, 1)} kg/m2`,
      condition: undefined,
      reference: undefined,
    });
  }

  const gas = current.gas;
  const currentHypercapnia =
    gas === undefined || gas.paco2MmHg === undefined ? undefined : isHypercapnic(gas, policy);
  // Held aside until the classification decides whether it counts; it keeps its place in the list.
  const currentIndex = reasons.length;
  const currentReason: RiskReason | undefined =
    gas !== undefined && currentHypercapnia === true
      ? { kind: 'current-hypercapnia', evidence: describeGasPco2(gas, now), condition: undefined, reference: undefined }
      : undefined;

  const historyWindowMinutes = policy.freshness.previousHypercapniaDays * 24 * 60;
  const earlier = newestFirst([...facts.bloodGases, ...facts.historicBloodGases]).filter((g) => {
    return g !== gas && readWithin(g, now.getTime(), historyWindowMinutes);
  });
  const earlierHypercapnic = earlier.find(
    (g) => isHypercapnic(g, policy) && (gas === undefined || readingMs(g) < readingMs(gas)),
  );
  if (earlierHypercapnic !== undefined) {
    previousFailure = true;
    reasons.push({
      kind: 'previous-hypercapnia',
      evidence: describeGasPco2(earlierHypercapnic, now),
      condition: undefined,
      reference: undefined,
    });
  }

  const bicarbonate = gas?.hco3MmolPerL;
  // The marker is a raised HCO3 with a pH that is not alkalaemic (BTS 2017 as quoted: "with normal
  // pH"): with alkalaemia a raised HCO3 is a metabolic alkalosis (diuretics, vomiting), not
  // compensation for CO2 retention. Without a pH it still counts, to stay cautious.
  const alkalaemic = gas?.ph !== undefined && gas.ph > BLOOD_GAS_RANGE_DEFAULTS.alkalosisPhAbove;
  // On a hypercapnic gas the acute rise itself lifts HCO3 (1 mmol/L per 10 mmHg, physiology teaching
  // as quoted secondarily); only a bicarbonate beyond it shows renal compensation.
  const beyondAcuteRise =
    gas?.paco2MmHg === undefined || currentHypercapnia !== true || bicarbonate === undefined
      ? true
      : bicarbonate > expectedBicarbonateMmolPerL(gas.paco2MmHg, 'acute') + COMPENSATION_ALLOWANCE_MMOL_PER_L;
  if (
    gas !== undefined &&
    bicarbonate !== undefined &&
    !alkalaemic &&
    beyondAcuteRise &&
    bicarbonate > policy.hypercapnicRisk.chronicBicarbonateAboveMmolPerL
  ) {
    reasons.push({
      kind: 'raised-bicarbonate',
      evidence: `HCO3 ${formatGasValue(gas, 'hco3') ?? ''}`.trim(),
      condition: undefined,
      reference: undefined,
    });
  }

  const classification = classifyHypercapnia(gas, reasons, policy);
  const currentCounts =
    currentReason !== undefined &&
    !(classification.kind === 'acute' && policy.hypercapnicRisk.acuteHypercapniaWithoutRiskTarget === 'keep');
  if (currentReason !== undefined && currentCounts) {
    reasons.splice(currentIndex, 0, currentReason);
  }
  return { atRisk: reasons.length > 0, reasons, currentHypercapnia, previousFailure, classification };
}
