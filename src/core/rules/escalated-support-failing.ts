import { formatFraction, formatNumber, formatRange } from '../assessment/format.js';
import type { Assessment } from '../assessment/types.js';
import type { Finding } from '../types.js';
import { describeMeasured, describeOrder } from './support/describe.js';
import { findEscalatedSupportFailure } from './support/escalated-support.js';
import type { EscalatedSupportFailure } from './support/escalated-support.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/** "high flow at FiO2 0.70" or "CPAP/NIV": short, for the summary. */
function describeSupport(failure: EscalatedSupportFailure): string {
  if (failure.support === 'cpap-niv') {
    return 'CPAP/NIV';
  }
  const fraction = Math.max(failure.fio2AtReading?.fraction ?? 0, failure.orderedHighFio2 ?? 0);
  return `high flow at FiO2 ${formatFraction(fraction)}`;
}

/** Why the support counts as failing, in words for the detail. */
function describeWhy(failure: EscalatedSupportFailure, thresholdWords: string): string {
  if (failure.support === 'cpap-niv') {
    return 'the patient was on CPAP or NIV when the SpO2 was read';
  }
  const parts = [
    failure.fio2AtReading === undefined
      ? undefined
      : `FiO2 ${formatFraction(failure.fio2AtReading.fraction)} ${failure.fio2AtReading.words}`,
    failure.orderedHighFio2 === undefined ? undefined : `this order sets FiO2 ${formatFraction(failure.orderedHighFio2)}`,
  ].filter((part): part is string => part !== undefined);
  return `on high-flow nasal oxygen (${parts.join('; ')}), policy threshold ${thresholdWords}`;
}

/** The ROX reading for the card, with the Roca threshold used and why; or why there is none. */
function describeRox(assessment: Assessment, failure: EscalatedSupportFailure): string {
  if (failure.support === 'cpap-niv') {
    return 'not applicable (ROX is validated on high flow only)';
  }
  const rox = assessment.physiology.rox;
  if (rox.kind === 'unknown') {
    return `not calculated (${rox.reason})`;
  }
  const { index, threshold, thresholdNote, interpretation } = rox.value.value;
  const reading =
    interpretation === 'high-risk' && threshold !== undefined
      ? `below the ${threshold.failureBelow} failure threshold`
      : interpretation === 'low-risk'
        ? '4.88 or more'
        : 'not below the failure threshold';
  return `${formatNumber(index, 2)}, ${reading}; ${thresholdNote}`;
}

/**
 * The patient is below the titration target on escalated support: on CPAP or NIV, or on high-flow
 * nasal oxygen at a set FiO2 at or above `thresholds.highFlowFailingFio2AtLeast` (0.6; at the
 * reading, or set by this order). Therapy at the top of the ward is failing: critical-care review now.
 *
 * Rationale: high flow and NIV are the last steps before intubation; a patient below target on them
 * needs the team that can offer the next step (BTS 2017: senior review and critical care for a high
 * or rising oxygen need, from memory; BTS/ICS 2016: a plan for NIV failure, from memory). On high flow
 * the ROX index (set FiO2; Roca 2019 thresholds for the hours on high flow, the 12-h one when the
 * start is unknown) is shown beside it. "On" means in force when the SpO2 was read (an active order,
 * this order if written before the reading, or a recorded flow only high flow reaches): a new order
 * for high flow or NIV is the response to the reading. Critical. Suggests nothing: no lower tier of
 * device is ever offered. spo2-below-target and high-oxygen-requirement stay silent when this fires.
 * Not for comfort orders. Sources: BTS 2017, BTS/ICS 2016 (both from memory for the wording); Roca
 * 2019 (verified); the FiO2 threshold is the local policy's.
 */
export const rule: Rule = {
  id: 'escalated-support-failing',
  title: 'Escalated support failing: critical-care review now',
  version: 1,
  hooks: ['order-sign', 'patient-view'],
  defaultIndicator: 'critical',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const failure = findEscalatedSupportFailure(assessment, facts, policy, now);
    const order = assessment.order;
    if (failure === undefined || order === undefined) {
      return [];
    }
    const threshold = `FiO2 ${formatFraction(policy.thresholds.highFlowFailingFio2AtLeast)} or more`;
    const rox = assessment.physiology.rox;
    const useRox = failure.support === 'high-flow' && rox.kind === 'ok';
    return [
      makeFinding(rule, {
        orderReference: order.reference,
        values: {
          support: describeSupport(failure),
          spo2: describeMeasured(failure.spo2, now, '%'),
          targetRange: formatRange(failure.target),
          orderDescription: describeOrder(order),
          why: describeWhy(failure, threshold),
          roxStatus: describeRox(assessment, failure),
        },
        computations: useRox ? [rox.value.computation] : [],
        sourceKeys: [
          'bts-2017',
          ...(failure.support === 'cpap-niv' ? ['bts-ics-2016'] : ['local-policy']),
          ...(useRox ? ['roca-2019'] : []),
        ],
      }),
    ];
  },
};
