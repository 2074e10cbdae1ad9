import { formatPercent, formatRange } from '../assessment/format.js';
import type { Assessment } from '../assessment/types.js';
import { news2Spo2Points } from '../physiology/news2-spo2-score.js';
import type { Facts, Finding } from '../types.js';
import { describeMeasured, readOnOxygen } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/**
 * What confirms hypercapnic respiratory failure: an earlier hypercapnic gas, previous NIV or IMV, or
 * chronic hypercapnic failure (the assessment's `previousFailure`), or an arterial current gas at or
 * above the hypercapnia threshold. A venous PCO2 runs higher than arterial, so it does not confirm.
 */
function confirmation(assessment: Assessment, facts: Facts): string | undefined {
  const risk = assessment.hypercapnicRisk;
  const confirming = risk.reasons.filter(
    (r) =>
      r.kind === 'previous-hypercapnia' ||
      r.kind === 'previous-ventilation' ||
      r.kind === 'previous-hypercapnic-failure' ||
      (r.kind === 'current-hypercapnia' && assessment.current.gas?.specimen === 'arterial'),
  );
  if (confirming.length > 0) {
    return confirming.map((r) => r.evidence).join('; ');
  }
  // Previous NIV or chronic failure documented but not in the policy's risk list still confirms it.
  const documented = facts.conditions.find(
    (c) => c.kind === 'previous-niv-or-imv' || c.kind === 'chronic-hypercapnic-respiratory-failure',
  );
  return risk.previousFailure && documented !== undefined ? `${documented.display} (${documented.matchedBy})` : undefined;
}

/**
 * The at-risk range (`targets.hypercapnicRisk`, 88–92 %) applies and is the range being titrated to,
 * and hypercapnic respiratory failure is confirmed (an earlier hypercapnic gas, previous NIV or IMV,
 * chronic hypercapnic failure, or an arterial current gas at or above the hypercapnia threshold).
 *
 * Rationale: NEWS2 scores SpO2 on Scale 2 for patients with confirmed hypercapnic respiratory failure
 * and a prescribed 88–92 % target; on Scale 1 an SpO2 of 88–92 % scores 2–3 points and the ward's
 * early-warning score alarms at target, while on Scale 2 it scores 0 and over-oxygenation scores
 * instead (Royal College of Physicians 2017). Scale 1 applies to everyone else, including COPD
 * without confirmed hypercapnia, so the card does not fire then. Not for pregnancy, for which NEWS2
 * is not validated (RCP 2017, from memory). Info. No change is suggested: the choice of scale is
 * recorded on the observation chart by a competent clinical decision maker (RCP 2017, from memory).
 * Sources: Royal College of Physicians NEWS2 (2017); BTS 2017 Table 4.
 */
export const rule: Rule = {
  id: 'news2-scale-2',
  title: 'Score SpO2 on NEWS2 Scale 2',
  version: 3,
  hooks: ['order-sign'],
  defaultIndicator: 'info',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const { order, target, titrationTarget } = assessment;
    const atRiskRange = policy.targets.hypercapnicRisk;
    // RCP 2017: Scale 2 goes with a prescribed 88-92 % target, so the order must state that range;
    // while another range is ordered the target cards speak first, and the chart stays on Scale 1.
    const titratedToAtRiskRange =
      titrationTarget !== undefined &&
      titrationTarget.basis === 'ordered' &&
      titrationTarget.range.lowPercent === atRiskRange.lowPercent &&
      titrationTarget.range.highPercent === atRiskRange.highPercent;
    if (
      order === undefined ||
      target.kind !== 'range' ||
      target.basis !== 'hypercapnic-risk' ||
      !titratedToAtRiskRange ||
      facts.conditions.some((c) => c.kind === 'pregnancy')
    ) {
      return [];
    }
    const confirmedBy = confirmation(assessment, facts);
    if (confirmedBy === undefined) {
      return [];
    }
    const spo2 = assessment.current.spo2;
    const onOxygen = readOnOxygen(assessment, facts) ?? true;
    const currentScore =
      spo2 === undefined
        ? 'no current SpO2 to score'
        : `SpO2 ${describeMeasured(spo2, now, '%')} ${onOxygen ? 'on oxygen' : 'on air'} scores ` +
          `${news2Spo2Points(spo2.value, 2, onOxygen)} on Scale 2 and ${news2Spo2Points(spo2.value, 1, onOxygen)} on Scale 1`;
    return [
      makeFinding(rule, {
        // About the patient, not one order: two drafts signed together get one card.
        orderReference: undefined,
        values: {
          targetRange: formatRange(atRiskRange),
          confirmedBy,
          currentScore,
          scale1Top: formatPercent(atRiskRange.highPercent),
        },
        sourceKeys: ['rcp-news2-2017', 'bts-2017'],
      }),
    ];
  },
};
