import { estimateOrderDelivery } from '../assessment/build-assessment.js';
import { isWithin, newestFirst } from '../assessment/current-values.js';
import { formatFlow, formatRange } from '../assessment/format.js';
import type { Assessment } from '../assessment/types.js';
import { flowRangeFor } from '../devices/catalogue.js';
import type { Facts, Finding, OrderChange, OxygenOrder } from '../types.js';
import { describeMeasured, describeOrder, readOnOxygen } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { isTitration } from './support/order-purpose.js';
import { reasonNotToLowerOxygen } from './support/oxygen-lowering.js';
import type { Rule } from './support/rule-types.js';

/** Two FiO2 estimates closer than this are the same oxygen (the estimates carry two decimals). */
const SAME_FIO2_WITHIN = 0.005;

/**
 * True when the order being signed already gives less oxygen than the patient was having: a lower
 * estimated FiO2 than an active order on record (same model, same breathing), a set FiO2 below the
 * FiO2 recorded at the reading, or, on a device whose FiO2 follows its flow, a flow below the
 * running one (the latest recorded flow, else that of an active order on record for the same
 * device). Advising a step down then only repeats what the order does.
 */
function orderAlreadyLowers(order: OxygenOrder, assessment: Assessment, facts: Facts, latestFlow: number | undefined): boolean {
  const ordered = assessment.delivery.kind === 'ok' ? assessment.delivery.value.fio2.estimate : undefined;
  // Each active order's estimate is worked out only until one answers, and none without an ordered figure.
  const givesMore = (o: OxygenOrder): boolean => {
    if (ordered === undefined || o.reference === order.reference) {
      return false;
    }
    const onRecord = estimateOrderDelivery(o, assessment.current);
    return onRecord.kind === 'ok' && onRecord.value.fio2.estimate > ordered + SAME_FIO2_WITHIN;
  };
  if (facts.activeOrders.some(givesMore)) {
    return true;
  }
  const atReading = assessment.physiology.fio2AtSpo2;
  if (order.setFio2Fraction !== undefined) {
    return (
      atReading.kind === 'ok' &&
      atReading.value.basis === 'recorded-fio2' &&
      order.setFio2Fraction < atReading.value.estimate - SAME_FIO2_WITHIN
    );
  }
  const runningFlow =
    latestFlow ??
    facts.activeOrders.find((o) => o.device === order.device && o.flowLPerMin !== undefined)?.flowLPerMin;
  return order.flowLPerMin !== undefined && runningFlow !== undefined && order.flowLPerMin < runningFlow;
}

/**
 * True when another card advises a range higher than the ordered one that the SpO2 already lies in
 * (re-targeting after a normal gas, or a standard range in place of a lower one): a step down to
 * the ordered range would contradict that card.
 */
function withinHigherAdvisedRange(assessment: Assessment, spo2Percent: number): boolean {
  const comparison = assessment.targetComparison;
  if (comparison.kind !== 'lower-range-without-risk' && comparison.kind !== 'differs') {
    return false;
  }
  const { ordered, advised } = comparison;
  return ordered !== undefined && ordered.highPercent < advised.highPercent && spo2Percent <= advised.highPercent;
}


/**
 * The current SpO2, read on oxygen, is above the upper bound of the range being titrated to (the
 * ordered range, else the applicable one; the applicable one also when the ordered range is the
 * lower at-risk range without a documented reason, so 93 % on 88–92 % ordered with no risk is not
 * "above target" while 94–98 % applies).
 *
 * Rationale: BTS 2017 advises lowering oxygen when SpO2 is above the target range and weaning as the
 * patient improves; BMJ 2018 recommends keeping SpO2 at or below 96 % in acutely ill medical patients,
 * and in COPD exacerbations an SpO2 above 92 % has been linked with higher mortality (Echevarria
 * 2021), so the finding is a warning when the at-risk range applies and information otherwise.
 * Suggests one step down on a nasal cannula (not below the hospital's lowest cannula flow, policy
 * `devices`; the device's lowest flow by default); elsewhere the next
 * step depends on the device and local practice, so no change is offered. No step down is offered
 * while the current gas shows hypercapnic acidosis or acute hypercapnia without chronic retention. Silent when the order
 * already gives less oxygen than the patient was having, and when another card advises a higher
 * range that the SpO2 already lies in (a step down would contradict it).
 * Thresholds: the titration target (ordered, or `targets.*` through target selection);
 * `freshness.vitalSignsMinutes` for a current SpO2.
 * Sources: BTS 2017 (weaning and titration); BMJ 2018; Echevarria et al., EMJ 2021 (card text).
 */
export const rule: Rule = {
  id: 'spo2-above-target',
  title: 'SpO2 above the target range while on oxygen',
  version: 6,
  hooks: ['order-sign'],
  defaultIndicator: 'info',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const { order, titrationTarget, current } = assessment;
    const spo2 = current.spo2;
    if (order === undefined || titrationTarget === undefined || spo2 === undefined) {
      return [];
    }
    // Comfort, stop, weaning and room-air orders are not titrations: no step down to advise.
    if (!isTitration(order)) {
      return [];
    }
    if (spo2.value <= titrationTarget.range.highPercent || readOnOxygen(assessment, facts) !== true) {
      return [];
    }
    const latestFlow = newestFirst(facts.o2FlowLPerMin).find((f) =>
      isWithin(f, now, policy.freshness.vitalSignsMinutes),
    )?.value;
    if (withinHigherAdvisedRange(assessment, spo2.value) || orderAlreadyLowers(order, assessment, facts, latestFlow)) {
      return [];
    }
    // The hospital's lowest cannula flow (policy `devices`; BTS 2017's 1 L/min by default).
    const minimum = flowRangeFor(policy.devices, 'nasal-cannula').min;
    const flow = order.flowLPerMin;
    // Offer a step down only when this order is not already lower than what is running, and never
    // while the gas shows hypercapnic acidosis or acute hypercapnia (support/oxygen-lowering.ts).
    // A target written as one bound or two ranges would still tell the nurse to titrate by those words
    // after a flow change ("sats >= 94%"): the target card asks for one range first, so no step here.
    const change: OrderChange | undefined =
      reasonNotToLowerOxygen(assessment) === undefined &&
      order.targetNote === undefined &&
      order.device === 'nasal-cannula' &&
      flow !== undefined &&
      flow > minimum &&
      (latestFlow === undefined || flow >= latestFlow)
        ? { kind: 'set-flow', flowLPerMin: Math.max(minimum, flow - policy.thresholds.nasalCannulaStepDownLPerMin) }
        : undefined;
    // A range that exists to limit oxygen (hypercapnic risk, BTS 2017 Table 4; paraquat or bleomycin,
    // Table 3) makes excess oxygen a harm, not just a waste: a warning there.
    const atRiskRange =
      assessment.target.kind === 'range' &&
      (assessment.target.basis === 'hypercapnic-risk' || assessment.target.basis === 'oxygen-toxicity-risk');
    return [
      makeFinding(rule, {
        indicator: atRiskRange ? 'warning' : rule.defaultIndicator,
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          spo2: describeMeasured(spo2, now, '%'),
          targetRange: formatRange(titrationTarget.range),
          targetSource:
            titrationTarget.basis === 'ordered'
              ? 'the ordered range'
              : titrationTarget.basis === 'advised-over-ordered'
                ? 'the advised range (the ordered range is higher than is safe for this patient)'
                : titrationTarget.basis === 'applicable-over-lower-ordered' && order.target !== undefined
                  ? `the range that applies (the lower ${formatRange(order.target)} ordered has no documented reason)`
                  : 'the policy range',
          ...(change?.kind === 'set-flow' ? { suggestedFlow: formatFlow(change.flowLPerMin) } : {}),
        },
        sourceKeys: atRiskRange ? ['bts-2017'] : ['bts-2017', 'bmj-2018'],
        ...(change === undefined ? {} : { change }),
      }),
    ];
  },
};
