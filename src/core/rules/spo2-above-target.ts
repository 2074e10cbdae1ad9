import { isWithin, newestFirst } from '../assessment/current-values.js';
import { formatFlow, formatRange } from '../assessment/format.js';
import { DEVICE_MODELS } from '../devices/index.js';
import type { Finding, OrderChange } from '../types.js';
import { describeMeasured, describeOrder, readOnOxygen } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';


/**
 * The current SpO2, read on oxygen, is above the upper bound of the range being titrated to (the
 * ordered range, else the applicable one).
 *
 * Rationale: BTS 2017 advises lowering oxygen when SpO2 is above the target range and weaning as the
 * patient improves; BMJ 2018 recommends keeping SpO2 at or below 96 % in acutely ill medical patients,
 * and in COPD exacerbations an SpO2 above 92 % has been linked with higher mortality (Echevarria
 * 2021), so the finding is a warning when the at-risk range applies and information otherwise.
 * Suggests one step down on a nasal cannula (not below the device's lowest flow); elsewhere the next
 * step depends on the device and local practice, so no change is offered.
 * Thresholds: the titration target (ordered, or `targets.*` through target selection);
 * `freshness.vitalSignsMinutes` for a current SpO2.
 * Sources: BTS 2017 (weaning and titration); BMJ 2018; Echevarria et al., EMJ 2021 (card text).
 */
export const rule: Rule = {
  id: 'spo2-above-target',
  title: 'SpO2 above the target range while on oxygen',
  version: 1,
  hooks: ['order-sign'],
  defaultIndicator: 'info',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const { order, titrationTarget, current } = assessment;
    const spo2 = current.spo2;
    if (order === undefined || titrationTarget === undefined || spo2 === undefined) {
      return [];
    }
    if (spo2.value <= titrationTarget.range.highPercent || readOnOxygen(assessment, facts) !== true) {
      return [];
    }
    const latestFlow = newestFirst(facts.o2FlowLPerMin).find((f) =>
      isWithin(f.at, now, policy.freshness.vitalSignsMinutes),
    )?.value;
    const minimum = DEVICE_MODELS['nasal-cannula'].flowRangeLPerMin.min;
    const flow = order.flowLPerMin;
    // Offer a step down only when this order is not already lower than what is running.
    const change: OrderChange | undefined =
      order.device === 'nasal-cannula' &&
      flow !== undefined &&
      flow > minimum &&
      (latestFlow === undefined || flow >= latestFlow)
        ? { kind: 'set-flow', flowLPerMin: Math.max(minimum, flow - policy.thresholds.nasalCannulaStepDownLPerMin) }
        : undefined;
    const atRiskRange = assessment.target.kind === 'range' && assessment.target.basis === 'hypercapnic-risk';
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
                : 'the policy range',
          ...(change?.kind === 'set-flow' ? { suggestedFlow: formatFlow(change.flowLPerMin) } : {}),
        },
        sourceKeys: atRiskRange ? ['bts-2017'] : ['bts-2017', 'bmj-2018'],
        ...(change === undefined ? {} : { change }),
      }),
    ];
  },
};
