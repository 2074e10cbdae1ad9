import { highFlowAtReading } from '../assessment/bedside-physiology.js';
import { formatFlow, formatFraction, formatPercent, formatRange } from '../assessment/format.js';
import { flowRangeFor, isStocked } from '../devices/catalogue.js';
import { DEVICE_MODELS } from '../devices/index.js';
import type { DeviceKind, Finding, OrderChange, OxygenOrder } from '../types.js';
import { describeMeasured, describeOrder, readOnOxygen } from './support/describe.js';
import { escalatedSupportFailingSpeaks, highFlowFio2InWords } from './support/escalated-support.js';
import { makeFinding } from './support/make-finding.js';
import { isTitration } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';
import { keepTier, patientSupportTier } from './support/support-tier.js';
import { readingMs } from '../time/reading-time.js';

/** Devices at or near the top of ward oxygen delivery: escalating beyond them needs a senior decision. */
const TOP_OF_WARD_DEVICES: readonly DeviceKind[] = ['reservoir-mask', 'high-flow-nasal-cannula', 'cpap-niv'];

/**
 * The current SpO2 is below the lower bound of the range being titrated to (target-selection.ts:
 * the ordered range, or the range that applies when the ordered one is higher than a limiting range
 * or lower without a documented reason; the card names which).
 *
 * Rationale: a reading below target calls for clinical review (BTS 2017: a fall below the target
 * range prompts reassessment). Warning; critical when SpO2 is below `thresholds.criticalSpo2BelowPercent`
 * (BTS 2017 Table 2: below 85 % start a reservoir mask at 15 L/min), more than
 * `thresholds.criticalPointsBelowTarget` points below the target, or when the patient was already
 * on a reservoir mask or NIV when it was read (an active order on record, or this order if written
 * before the reading), or on a recorded FiO2 at or above `thresholds.highOxygenFio2AtLeast`.
 * On high flow (an order in force, or a recorded flow only high flow reaches) the blender setting
 * decides instead: below `thresholds.highFlowFailingFio2AtLeast` there is room to titrate the FiO2
 * up, so a low SpO2 is a warning unless one of the SpO2 levels above makes it critical; at or above
 * it escalated-support-failing speaks; an FiO2 that is not known keeps it critical (it may be that
 * high).
 * A new order for one of those devices is the response to the reading, not a failure of it. A
 * reading taken on air, before this order starts oxygen, is reported only when critical: the order
 * itself is the response. Where no SpO2 target applies
 * (carbon monoxide, pneumothorax, cluster headache) only the critical threshold is checked. Suggests
 * a reservoir mask at the device's top flow when SpO2 is below the critical threshold, the patient is
 * not at risk of hypercapnia and the device is not already one of the above.
 * Silent when escalated-support-failing speaks (below target on CPAP/NIV, or on high flow at a high
 * set FiO2), so the two never repeat one message; speaks again if the hospital disables that rule.
 * Never suggests a device on a lower tier than the patient is on (devices/device-tier.ts), nor a
 * reservoir mask the hospital does not stock (policy `devices`); its flow is the top of the
 * hospital's reservoir-mask limits.
 * Source: BTS 2017 Table 2; the points-below threshold is a local choice.
 */
export const rule: Rule = {
  id: 'spo2-below-target',
  title: 'SpO2 below the target range',
  version: 5,
  hooks: ['order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const { order, titrationTarget, current, hypercapnicRisk } = assessment;
    const spo2 = current.spo2;
    // One card says one thing: below target on failing high flow or NIV is escalated-support-failing's.
    if (order === undefined || spo2 === undefined || escalatedSupportFailingSpeaks(assessment, facts, policy, now)) {
      return [];
    }
    // Comfort oxygen in terminal palliative care is not titrated to a saturation (BTS 2017).
    if (order.purpose === 'comfort') {
      return [];
    }
    const { criticalSpo2BelowPercent, criticalPointsBelowTarget } = policy.thresholds;
    const belowCriticalLevel = spo2.value < criticalSpo2BelowPercent;
    const lowBound = titrationTarget?.range.lowPercent;
    if (lowBound === undefined ? !belowCriticalLevel : spo2.value >= lowBound) {
      return [];
    }
    const farBelow = lowBound !== undefined && lowBound - spo2.value > criticalPointsBelowTarget;
    const isTopDevice = (o: OxygenOrder): boolean => o.device !== undefined && TOP_OF_WARD_DEVICES.includes(o.device);
    const isMaskOrNiv = (o: OxygenOrder): boolean => o.device === 'reservoir-mask' || o.device === 'cpap-niv';
    // Only what the patient was on when the SpO2 was read makes a low reading critical: a new order
    // for high flow or NIV is the response to the reading, not a sign that it has already failed.
    const orderInForce = order.authoredOn !== undefined && Date.parse(order.authoredOn) <= readingMs(spo2);
    // High flow is read from an order in force or a recorded flow only high flow reaches.
    const highFlow = highFlowAtReading(facts.activeOrders, order, facts.o2FlowLPerMin, spo2, now);
    const highFlowFio2 = highFlow === undefined ? undefined : highFlowFio2InWords(assessment, highFlow);
    const failingFio2 = policy.thresholds.highFlowFailingFio2AtLeast;
    // On high flow the blender has room below the failing FiO2: a low SpO2 there calls for titrating
    // the FiO2 up and a review (warning). At or above it, or set there by this order, the support is
    // failing (escalated-support-failing's critical card); an FiO2 nobody recorded may be that high.
    const highFlowBelowFailing =
      highFlowFio2 !== undefined &&
      highFlowFio2.fraction < failingFio2 &&
      !(order.device === 'high-flow-nasal-cannula' && (order.setFio2Fraction ?? 0) >= failingFio2);
    const onTopDevice =
      facts.activeOrders.some(isMaskOrNiv) || (orderInForce && isMaskOrNiv(order)) || (highFlow !== undefined && !highFlowBelowFailing);
    const fio2AtReading = assessment.physiology.fio2AtSpo2;
    // On high flow the failing FiO2 above is the measure of a high oxygen need, not this one.
    const highFio2AtReading =
      !onTopDevice &&
      highFlow === undefined &&
      fio2AtReading.kind === 'ok' &&
      fio2AtReading.value.basis !== 'order-estimate' &&
      fio2AtReading.value.estimate >= policy.thresholds.highOxygenFio2AtLeast;
    const critical = belowCriticalLevel || farBelow || onTopDevice || highFio2AtReading;
    if (!critical && readOnOxygen(assessment, facts) === false) {
      return [];
    }
    const reservoir = DEVICE_MODELS['reservoir-mask'];
    // The top of the hospital's reservoir-mask flows (the model's 15 L/min when it sets none).
    const reservoirTopFlow = flowRangeFor(policy.devices, 'reservoir-mask').max;
    // Never offer a reservoir mask in place of an order for high flow or NIV, or while one runs.
    // Nor a mask to a patient on a higher tier of support (a recorded high flow, say): keepTier.
    // Nor one the hospital does not stock: the card's words still give the guideline's advice.
    const change: OrderChange | undefined = keepTier(
      isStocked(policy.devices, 'reservoir-mask') &&
        belowCriticalLevel &&
        !hypercapnicRisk.atRisk &&
        !onTopDevice &&
        highFlow === undefined &&
        !isTopDevice(order) &&
        isTitration(order)
        ? { kind: 'set-device', device: 'reservoir-mask', flowLPerMin: reservoirTopFlow }
        : undefined,
      patientSupportTier(facts, order, policy, now),
    );
    const because = [
      belowCriticalLevel ? `below ${formatPercent(criticalSpo2BelowPercent)}` : undefined,
      farBelow ? `more than ${criticalPointsBelowTarget} points below the target` : undefined,
      onTopDevice ? 'already on a reservoir mask, high-flow or NIV' : undefined,
      highFlowBelowFailing && highFlowFio2 !== undefined
        ? `on high flow at FiO2 ${formatFraction(highFlowFio2.fraction)}, below the ${formatFraction(failingFio2)} failing level: the FiO2 may be titrated up`
        : undefined,
      highFio2AtReading && fio2AtReading.kind === 'ok'
        ? `already on FiO2 ${formatFraction(fio2AtReading.value.estimate)} when it was read`
        : undefined,
    ].filter((part): part is string => part !== undefined);
    return [
      makeFinding(rule, {
        indicator: critical ? 'critical' : rule.defaultIndicator,
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          spo2: describeMeasured(spo2, now, '%'),
          comparedWith:
            titrationTarget === undefined
              ? `the ${formatPercent(criticalSpo2BelowPercent)} alert level (no SpO2 target applies)`
              : titrationTarget.basis === 'advised-over-ordered'
                ? `the advised target ${formatRange(titrationTarget.range)}`
                : titrationTarget.basis === 'applicable-over-lower-ordered' && order.target !== undefined
                  ? `the target that applies, ${formatRange(titrationTarget.range)} (${formatRange(order.target)} ordered)`
                  : `the target ${formatRange(titrationTarget.range)}`,
          criticalLevel: formatPercent(criticalSpo2BelowPercent),
          // The guideline's flow, which the card's words attribute to it.
          reservoirFlow: formatFlow(reservoir.flowRangeLPerMin.max),
          urgency: because.length === 0 ? 'below the target range' : because.join('; '),
          ...(change?.kind === 'set-device'
            ? { suggestedDevice: `${reservoir.label} at ${formatFlow(change.flowLPerMin)}` }
            : {}),
        },
        sourceKeys: ['bts-2017', 'local-policy'],
        ...(change === undefined ? {} : { change }),
      }),
    ];
  },
};
