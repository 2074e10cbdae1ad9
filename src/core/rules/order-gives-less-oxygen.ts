import { estimateOrderDelivery } from '../assessment/build-assessment.js';
import { isWithin, newestFirst } from '../assessment/current-values.js';
import { formatFlow, formatFraction, formatRange } from '../assessment/format.js';
import type { Assessment } from '../assessment/types.js';
import { deviceTier, highestTier, tierRank, tierShownByRecordedFlow } from '../devices/device-tier.js';
import type { SupportTier } from '../devices/device-tier.js';
import { ROOM_AIR_FIO2 } from '../physiology/constants.js';
import type { Policy } from '../policy.js';
import type { Facts, Finding, OxygenOrder } from '../types.js';
import { describeAge, describeMeasured, describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { givesOxygen } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';
import { readingMs } from '../time/reading-time.js';

/** Two FiO2 figures closer than this are the same oxygen (the estimates carry two decimals). */
const SAME_FIO2_WITHIN = 0.005;

/** What the patient is on now, and the first way found in which the order gives less. */
interface Reduction {
  readonly onNow: string;
  readonly because: string;
}

/** The order's own delivery: its FiO2 range high end and tier; room air for a stop or room-air order. */
interface OrderGives {
  readonly highFio2: number | undefined;
  readonly tier: SupportTier | undefined;
  readonly noOxygen: boolean;
}

function orderGives(order: OxygenOrder, assessment: Assessment): OrderGives {
  if (!givesOxygen(order)) {
    return { highFio2: ROOM_AIR_FIO2, tier: undefined, noOxygen: true };
  }
  return {
    highFio2: assessment.delivery.kind === 'ok' ? assessment.delivery.value.fio2.high : undefined,
    tier: order.device === undefined ? undefined : deviceTier(order.device),
    noOxygen: false,
  };
}

/** An active order on that tier, named; else the tier itself (shown by a recorded high flow). */
function describeTier(tier: SupportTier, onRecord: readonly OxygenOrder[]): string {
  const named = onRecord.find((o) => o.device !== undefined && deviceTier(o.device) === tier);
  return named === undefined ? `${tier.replace(/-/g, ' ')} (a recorded flow)` : `${describeOrder(named)} (an active order)`;
}

/**
 * The first way in which `order` gives less oxygen than the patient is on now, or undefined when it
 * does not, or when nobody can tell. "On now": a recorded FiO2 at or after the SpO2 reading, the
 * active oxygen orders on record, and a current recorded O2 flow. Ranges are compared so that the
 * noise of an estimate cannot make a reduction: the order's high end must lie below the current
 * low end (or below a recorded FiO2).
 */
function findReduction(order: OxygenOrder, assessment: Assessment, facts: Facts, policy: Policy, now: Date): Reduction | undefined {
  const spo2At = assessment.current.spo2?.at;
  const gives = orderGives(order, assessment);
  const onRecord = facts.activeOrders.filter((o) => o.reference !== order.reference && givesOxygen(o));
  const freshFlows = newestFirst(facts.o2FlowLPerMin).filter((f) => isWithin(f, now, policy.freshness.vitalSignsMinutes));
  const latestFlow = freshFlows[0];
  const recordedFio2 =
    spo2At === undefined
      ? undefined
      : newestFirst(facts.fio2Fraction).find(
          (f) => readingMs(f) >= Date.parse(spo2At) && readingMs(f) <= now.getTime() && f.value > ROOM_AIR_FIO2 + SAME_FIO2_WITHIN,
        );

  // 1. A lower level of support (devices/device-tier.ts); a stop or room-air order is below every tier.
  const currentTier = highestTier([
    ...onRecord.map((o) => (o.device === undefined ? undefined : deviceTier(o.device))),
    ...freshFlows.map((f) => tierShownByRecordedFlow(f.value)),
  ]);
  if (currentTier !== undefined && (gives.noOxygen || (gives.tier !== undefined && tierRank(gives.tier) < tierRank(currentTier)))) {
    return { onNow: describeTier(currentTier, onRecord), because: gives.noOxygen ? 'it stops the oxygen' : 'it is a lower level of support' };
  }

  // 2. A recorded FiO2 at or after the SpO2 reading above the most the order can give.
  if (recordedFio2 !== undefined && gives.highFio2 !== undefined && gives.highFio2 < recordedFio2.value - SAME_FIO2_WITHIN) {
    return {
      onNow: `FiO2 ${formatFraction(recordedFio2.value)} (recorded ${describeAge(recordedFio2, now)})`,
      because: gives.noOxygen ? 'it stops the oxygen' : `it gives FiO2 at most about ${formatFraction(gives.highFio2)}`,
    };
  }

  for (const active of onRecord) {
    // 3. The same device at a lower flow or a lower set FiO2 than an order on record.
    if (!gives.noOxygen && active.device !== undefined && active.device === order.device) {
      const lowerFlow = order.flowLPerMin !== undefined && active.flowLPerMin !== undefined && order.flowLPerMin < active.flowLPerMin;
      const lowerSet =
        order.setFio2Fraction !== undefined &&
        active.setFio2Fraction !== undefined &&
        order.setFio2Fraction < active.setFio2Fraction - SAME_FIO2_WITHIN;
      if (lowerFlow || lowerSet) {
        return { onNow: `${describeOrder(active)} (an active order)`, because: lowerFlow ? 'a lower flow on the same device' : 'a lower FiO2 on the same device' };
      }
    }
    // 4. The most the order can give below the least an active order gives.
    const delivery = estimateOrderDelivery(active, assessment.current);
    if (delivery.kind === 'ok' && gives.highFio2 !== undefined && gives.highFio2 < delivery.value.fio2.low - SAME_FIO2_WITHIN) {
      return {
        onNow: `${describeOrder(active)} (an active order, FiO2 about ${formatFraction(delivery.value.fio2.low)}–${formatFraction(delivery.value.fio2.high)})`,
        because: gives.noOxygen ? 'it stops the oxygen' : `it gives FiO2 at most about ${formatFraction(gives.highFio2)}`,
      };
    }
  }

  // 5. A recorded flow above the order's flow on a device an active order on record also names.
  if (
    !gives.noOxygen &&
    latestFlow !== undefined &&
    order.flowLPerMin !== undefined &&
    order.flowLPerMin < latestFlow.value &&
    onRecord.some((o) => o.device !== undefined && o.device === order.device)
  ) {
    return { onNow: `${formatFlow(latestFlow.value)} recorded on the same device`, because: 'a lower flow on the same device' };
  }

  // 6. A stop order, or a weaning order that names no setting, while any oxygen is recorded or running.
  const weanWithoutSetting = order.purpose === 'wean' && order.flowLPerMin === undefined && order.setFio2Fraction === undefined;
  const onOxygen = onRecord.length > 0 || recordedFio2 !== undefined || (latestFlow !== undefined && latestFlow.value > 0);
  if ((gives.noOxygen || weanWithoutSetting) && onOxygen) {
    const first = onRecord[0];
    return {
      onNow:
        first !== undefined
          ? `${describeOrder(first)} (an active order)`
          : recordedFio2 !== undefined
            ? `FiO2 ${formatFraction(recordedFio2.value)} (recorded)`
            : `${formatFlow(latestFlow?.value ?? 0)} (recorded)`,
      because: gives.noOxygen ? 'it stops the oxygen' : 'it weans the oxygen',
    };
  }
  return undefined;
}

/**
 * The order being signed gives less oxygen than the patient is on now while the current SpO2 is
 * below the range being titrated to: a lower tier of support, an FiO2 whose top is below what is
 * running or recorded, the same device at a lower flow or set FiO2, or a stop or weaning order.
 *
 * Rationale: oxygen is reduced (weaned) only when the patient is stable with SpO2 in or above the
 * target range (BTS 2017, from memory); a fall below the target calls for more oxygen and review,
 * never less (BTS 2017 summary). Warning; critical when SpO2 is below
 * `thresholds.criticalSpo2BelowPercent` or more than `thresholds.criticalPointsBelowTarget` points
 * below the target. Comfort oxygen in terminal care is not titrated to a saturation (BTS 2017) and
 * is left alone, as is a patient with no SpO2 target (carbon monoxide and the like). Offers no
 * change: the right oxygen depends on the patient. spo2-below-target speaks for the low reading; this
 * card speaks only for the reduction.
 * Thresholds: the titration target; `freshness.vitalSignsMinutes` for a current recorded flow.
 * Source: BTS 2017 (weaning and titration; summary); the points-below threshold is a local choice.
 */
export const rule: Rule = {
  id: 'order-gives-less-oxygen',
  title: 'Order gives less oxygen while SpO2 is below target',
  version: 1,
  hooks: ['order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const { order, titrationTarget, current } = assessment;
    const spo2 = current.spo2;
    if (order === undefined || titrationTarget === undefined || spo2 === undefined) {
      return [];
    }
    if (order.purpose === 'comfort' || assessment.target.kind === 'no-spo2-target') {
      return [];
    }
    const lowBound = titrationTarget.range.lowPercent;
    if (spo2.value >= lowBound) {
      return [];
    }
    const reduction = findReduction(order, assessment, facts, policy, now);
    if (reduction === undefined) {
      return [];
    }
    const { criticalSpo2BelowPercent, criticalPointsBelowTarget } = policy.thresholds;
    const critical = spo2.value < criticalSpo2BelowPercent || lowBound - spo2.value > criticalPointsBelowTarget;
    return [
      makeFinding(rule, {
        indicator: critical ? 'critical' : rule.defaultIndicator,
        orderReference: order.reference,
        values: {
          orderDescription: givesOxygen(order) ? describeOrder(order) : 'no oxygen (stop or room air)',
          onNow: reduction.onNow,
          because: reduction.because,
          spo2: describeMeasured(spo2, now, '%'),
          targetRange: formatRange(titrationTarget.range),
        },
        sourceKeys: ['bts-2017', 'local-policy'],
      }),
    ];
  },
};
