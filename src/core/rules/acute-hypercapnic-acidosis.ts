import { formatGasValue, formatNumber, formatRange } from '../assessment/format.js';
import type { Finding } from '../types.js';
import { describeAge, describeMeasured } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/**
 * The current gas shows acute-on-chronic hypercapnic acidosis: pH below `thresholds.acidosisPhBelow`
 * with PCO2 at or above `hypercapnicRisk.hypercapniaPaco2`, in a patient with signs of chronic CO2
 * retention (the assessment's classification: a BTS 2017 Table 4 condition, previous NIV, IMV or
 * hypercapnic failure, an earlier hypercapnic gas, or bicarbonate beyond an acute rise). Acute
 * hypercapnia without those signs belongs to `hypercapnia-without-chronic-retention`.
 *
 * Rationale: respiratory acidosis in a patient on oxygen is a medical emergency; more oxygen does not
 * treat it, and controlled oxygen to the at-risk range (`targets.hypercapnicRisk`) is advised (BTS
 * 2017 Table 4). BTS/ICS 2016: consider NIV when pH stays below `thresholds.nivPhBelow` with PaCO2
 * above `thresholds.nivPaco2Above` after initial medical therapy; consider invasive ventilation below
 * `thresholds.invasiveVentilationPhBelow`. Critical. A venous or unlabelled sample is reported too
 * (venous pH runs a little lower and PCO2 higher than arterial, so the card asks for confirmation).
 * The card states the respiratory rate as recorded rather than naming a mechanism: a tiring patient
 * breathes fast and shallow, a sedated one slowly, and both retain CO2.
 * Also on patient-view, for a patient with an active oxygen order that is not for comfort: the titration
 * review's step-down cards hold back in hypercapnic acidosis, and without this card the reason (and the
 * call for NIV) would not be shown on a record opened with SpO2 in range.
 * Sources: BTS 2017 Table 4; BTS/ICS 2016; RCEM Learning (pH range).
 */
export const rule: Rule = {
  id: 'acute-hypercapnic-acidosis',
  title: 'Acute-on-chronic hypercapnic (respiratory) acidosis on the current gas',
  version: 3,
  hooks: ['order-sign', 'patient-view'],
  defaultIndicator: 'critical',
  evaluate: ({ assessment, facts, policy, now, hook }): readonly Finding[] => {
    // On patient-view the review is of a patient on an oxygen order that titrates to a target: not for
    // a record without one, nor for comfort oxygen in end-of-life care (BTS 2017: comfort, not targets).
    if (hook === 'patient-view' && (assessment.order === undefined || assessment.order.purpose === 'comfort')) {
      return [];
    }
    const gas = assessment.current.gas;
    const { ph, paco2MmHg } = gas ?? {};
    const t = policy.thresholds;
    const hypercapnia = policy.hypercapnicRisk.hypercapniaPaco2;
    if (gas === undefined || ph === undefined || paco2MmHg === undefined) {
      return [];
    }
    const classification = assessment.hypercapnicRisk.classification;
    if (classification.kind !== 'acute-on-chronic' || !(ph < t.acidosisPhBelow && paco2MmHg >= hypercapnia.mmHg)) {
      return [];
    }
    const respRate = assessment.current.respRate;
    const yesNo = (met: boolean): string => (met ? 'met' : 'not met');
    // A patient already on NIV is not told to consider it: BTS/ICS 2016 asks then for a review of the
    // settings, the mask and the cause, with a repeat gas, and escalation within the ceiling of care.
    const onNiv = [assessment.order, ...facts.activeOrders].some((o) => o?.device === 'cpap-niv');
    return [
      makeFinding(rule, {
        orderReference: undefined, // about the patient, not an order: stated once per call
        values: {
          ph: formatGasValue(gas, 'ph') ?? formatNumber(ph, 2),
          paco2: formatGasValue(gas, 'paco2') ?? '',
          gasAge: describeAge(gas, now),
          specimen: gas.specimen === 'arterial' ? 'arterial' : `${gas.specimen} (confirm with an arterial sample)`,
          acidosisPh: formatNumber(t.acidosisPhBelow, 2),
          hypercapniaThreshold: hypercapnia.display,
          nivThresholds: `pH < ${formatNumber(t.nivPhBelow, 2)} and PaCO2 > ${t.nivPaco2Above.display}`,
          nivThresholdsMet: yesNo(ph < t.nivPhBelow && paco2MmHg > t.nivPaco2Above.mmHg),
          invasiveThreshold: `pH < ${formatNumber(t.invasiveVentilationPhBelow, 2)}`,
          invasiveThresholdMet: yesNo(ph < t.invasiveVentilationPhBelow),
          advisedRange: formatRange(policy.targets.hypercapnicRisk),
          nivAdvice: onNiv ? 'on NIV: review settings and escalation' : 'consider NIV',
          bicarbonate: classification.compensation?.shown ?? 'bicarbonate not available',
          chronicEvidence: classification.chronicEvidence.join('; '),
          respiratoryRate:
            respRate === undefined
              ? `not recorded in the last ${formatNumber(policy.freshness.vitalSignsMinutes / 60, 0)} h`
              : describeMeasured(respRate, now, '/min'),
        },
        computations: classification.compensation === undefined ? [] : [classification.compensation.computation],
        sourceKeys: ['bts-2017', 'bts-ics-2016', 'rcem-abg'],
      }),
    ];
  },
};
