import { formatGasValue, formatNumber, formatRange } from '../assessment/format.js';
import type { Assessment } from '../assessment/types.js';
import type { ConditionKind, Facts, Finding } from '../types.js';
import { describeAge, describeMeasured } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';
import { citedGuidelineLabel } from './support/cited-guideline.js';

/** Documented acute illnesses in which a raised PCO2 means tiring, not chronic retention. */
const ACUTE_CAUSES: readonly ConditionKind[] = ['acute-asthma', 'sedative-or-opioid-toxicity'];

function describeCauses(facts: Facts): string {
  const causes = facts.conditions.filter((c) => ACUTE_CAUSES.includes(c.kind));
  return causes.length === 0
    ? 'none documented; consider acute severe asthma, exhaustion, sedative or opioid toxicity and neuromuscular weakness'
    : [...new Set(causes.map((c) => `${c.display} (${c.matchedBy})`))].join('; ');
}

/** The range the patient keeps or is moved to, and why, as the card states it. */
function describeRange(assessment: Assessment, guideline: string): string {
  const target = assessment.target;
  if (target.kind === 'no-spo2-target') {
    return `No SpO2 range applies (${target.reason}); oxygen is not reduced because of the CO2.`;
  }
  const range = formatRange(target.range);
  if (target.basis === 'hypercapnic-risk') {
    return (
      `Local policy moves the range to ${range} for acute hypercapnia (policy key ` +
      'hypercapnicRisk.acuteHypercapniaWithoutRiskTarget). Do not let SpO2 fall below it because of the CO2.'
    );
  }
  return (
    `The range stays ${range} (local policy keeps the patient's range for acute hypercapnia without ` +
    'chronic retention). With no history of CO2 retention the raised PCO2 comes from tiring, not from ' +
    `oxygen, and lowering oxygen adds hypoxaemia to the acidosis; ${guideline} keeps acute asthma at ` +
    'the standard range.'
  );
}

/**
 * The current gas shows hypercapnia (PCO2 at or above `hypercapnicRisk.hypercapniaPaco2`) with no
 * sign of chronic CO2 retention: the assessment classifies it `acute` (no BTS 2017 Table 4 condition,
 * no previous NIV, IMV, hypercapnic failure or hypercapnic gas, and a bicarbonate within the acute
 * rise). In acute severe asthma, exhaustion, sedative or opioid toxicity or neuromuscular weakness this
 * means the patient is tiring.
 *
 * Rationale: a normal or raised PaCO2 in acute asthma marks life-threatening or near-fatal asthma
 * (BTS/SIGN asthma guideline, from memory), and acute hypercapnic acidosis in any patient without
 * chronic retention calls for urgent senior and critical-care review. Oxygen is not the cause and is
 * never reduced because of the CO2: BTS 2017 keeps acute asthma at the standard range. The range the
 * card states follows `hypercapnicRisk.acuteHypercapniaWithoutRiskTarget` (target selection); the
 * one-click step down of other rules is withheld (support/oxygen-lowering.ts).
 * Critical when pH is below `thresholds.acidosisPhBelow` or acute asthma is documented; warning when
 * pH is still in range otherwise. No change is suggested.
 * Sources: BTS 2017; BTS/SIGN asthma guideline (from memory); RCEM Learning (pH range).
 */
export const rule: Rule = {
  id: 'hypercapnia-without-chronic-retention',
  title: 'Hypercapnia without chronic CO2 retention: the patient may be tiring',
  version: 1,
  hooks: ['order-sign'],
  defaultIndicator: 'critical',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const classification = assessment.hypercapnicRisk.classification;
    const gas = assessment.current.gas;
    if (classification.kind !== 'acute' || gas?.paco2MmHg === undefined || gas.ph === undefined) {
      return [];
    }
    const asthma = facts.conditions.some((c) => c.kind === 'acute-asthma');
    const critical = classification.acidaemic === true || asthma;
    const respRate = assessment.current.respRate;
    return [
      makeFinding(rule, {
        indicator: critical ? rule.defaultIndicator : 'warning',
        orderReference: undefined, // about the patient, not an order: stated once per call
        values: {
          ph: formatGasValue(gas, 'ph') ?? formatNumber(gas.ph, 2),
          paco2: formatGasValue(gas, 'paco2') ?? '',
          gasAge: describeAge(gas, now),
          specimen: gas.specimen === 'arterial' ? 'arterial' : `${gas.specimen} (confirm with an arterial sample)`,
          classification: classification.summary,
          acidosisPh: formatNumber(policy.thresholds.acidosisPhBelow, 2),
          hypercapniaThreshold: policy.hypercapnicRisk.hypercapniaPaco2.display,
          bicarbonate: classification.compensation?.shown ?? 'bicarbonate not available',
          respiratoryRate:
            respRate === undefined
              ? `not recorded in the last ${formatNumber(policy.freshness.vitalSignsMinutes / 60, 0)} h`
              : describeMeasured(respRate, now, '/min'),
          causes: describeCauses(facts),
          asthmaNote: asthma
            ? 'In acute asthma a normal or raised PaCO2 marks life-threatening or near-fatal asthma.'
            : 'In acute asthma even a normal PaCO2 marks life-threatening asthma.',
          rangeReasoning: describeRange(assessment, citedGuidelineLabel(policy, rule.id)),
        },
        computations: classification.compensation === undefined ? [] : [classification.compensation.computation],
        sourceKeys: ['bts-2017', 'bts-sign-asthma', 'rcem-abg', 'local-policy'],
      }),
    ];
  },
};
