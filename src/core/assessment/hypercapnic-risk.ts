import { BLOOD_GAS_RANGE_DEFAULTS } from '../physiology/index.js';
import type { Policy } from '../policy.js';
import type { BloodGas, ConditionKind, Facts } from '../types.js';
import { newestFirst } from './current-values.js';
import { formatDuration, formatGasValue, formatNumber, minutesBetween } from './format.js';
import type { CurrentValues, HypercapnicRiskDecision, RiskReason } from './types.js';

/** Conditions that, when documented, mean a previous episode of hypercapnic failure. */
const PREVIOUS_FAILURE_CONDITIONS: Readonly<Partial<Record<ConditionKind, RiskReason['kind']>>> = {
  'previous-niv-or-imv': 'previous-ventilation',
  'chronic-hypercapnic-respiratory-failure': 'previous-hypercapnic-failure',
};

function describeGasPco2(gas: BloodGas, now: Date): string {
  const label = gas.specimen === 'arterial' ? 'PaCO2' : `${gas.specimen} PCO2`;
  const age = minutesBetween(gas.at, now);
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
 * (long-standing hypercapnia with normal pH, BTS 2017 as quoted secondarily; pH range RCEM). Previous NIV/IMV, chronic hypercapnic failure or an earlier
 * hypercapnic gas set `previousFailure`, which stops re-targeting to the standard range.
 */
export function assessHypercapnicRisk(
  facts: Facts,
  policy: Policy,
  current: CurrentValues,
  now: Date,
): HypercapnicRiskDecision {
  const riskConditions = new Set<ConditionKind>(policy.hypercapnicRisk.conditions);
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
  if (gas !== undefined && currentHypercapnia === true) {
    reasons.push({
      kind: 'current-hypercapnia',
      evidence: describeGasPco2(gas, now),
      condition: undefined,
      reference: undefined,
    });
  }

  const historyWindowMinutes = policy.freshness.previousHypercapniaDays * 24 * 60;
  const earlier = newestFirst([...facts.bloodGases, ...facts.historicBloodGases]).filter((g) => {
    const age = minutesBetween(g.at, now);
    return g !== gas && age !== undefined && age <= historyWindowMinutes;
  });
  const earlierHypercapnic = earlier.find(
    (g) => isHypercapnic(g, policy) && (gas === undefined || Date.parse(g.at) < Date.parse(gas.at)),
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
  if (
    gas !== undefined &&
    bicarbonate !== undefined &&
    !alkalaemic &&
    bicarbonate > policy.hypercapnicRisk.chronicBicarbonateAboveMmolPerL
  ) {
    reasons.push({
      kind: 'raised-bicarbonate',
      evidence: `HCO3 ${formatGasValue(gas, 'hco3') ?? ''}`.trim(),
      condition: undefined,
      reference: undefined,
    });
  }

  return { atRisk: reasons.length > 0, reasons, currentHypercapnia, previousFailure };
}
