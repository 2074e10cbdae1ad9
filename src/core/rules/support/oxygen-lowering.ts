import type { Assessment } from '../../assessment/types.js';
import { estimateDelivery } from '../../devices/index.js';
import type { Facts, OrderChange } from '../../types.js';

/** Two FiO2 estimates closer than this are the same oxygen (the estimates carry two decimals). */
const SAME_FIO2_WITHIN = 0.005;

/**
 * Why no suggestion may lower the oxygen now, or undefined when one may. Oxygen is never stepped
 * down by one click while:
 * - the current gas shows hypercapnic acidosis (acute, or acute-on-chronic): the patient may be
 *   tiring and needs review, and a fall in oxygen adds hypoxaemia to the acidosis (BTS 2017 warns
 *   against sudden reductions in hypercapnic patients, from memory; BTS/SIGN asthma guideline, from
 *   memory: a raised PaCO2 in acute asthma marks near-fatal asthma);
 * - the hypercapnia is acute with no sign of chronic retention, acidaemic or not (the CO2 comes from
 *   tiring, not from oxygen);
 * - SpO2 is below the range being titrated to, or below the applicable range (BTS 2017: below target
 *   calls for more oxygen and reassessment, never less).
 * The card may still advise; the clinician decides.
 */
export function reasonNotToLowerOxygen(assessment: Assessment): string | undefined {
  const hypercapnia = assessment.hypercapnicRisk.classification;
  if (hypercapnia.acidaemic === true && (hypercapnia.kind === 'acute' || hypercapnia.kind === 'acute-on-chronic')) {
    return 'the current gas shows hypercapnic acidosis';
  }
  if (hypercapnia.kind === 'acute') {
    return 'the current gas shows acute hypercapnia without chronic CO2 retention';
  }
  const spo2 = assessment.current.spo2;
  const lows = [
    assessment.titrationTarget?.range.lowPercent,
    assessment.target.kind === 'range' ? assessment.target.range.lowPercent : undefined,
  ];
  if (spo2 !== undefined && lows.some((low) => low !== undefined && spo2.value < low)) {
    return 'SpO2 is below the target range';
  }
  return undefined;
}

/**
 * True when a suggested change would give less oxygen than the order (or, without an ordered flow,
 * the latest recorded flow): a lower flow, or a device whose estimated FiO2 is lower than the
 * order's estimate or than the FiO2 recorded at the SpO2 reading. A new target range is a
 * prescription, not delivered oxygen, and is judged by the target rules.
 */
export function changeLowersOxygen(change: OrderChange, assessment: Assessment, facts: Facts): boolean {
  const order = assessment.order;
  if (order === undefined) {
    return false;
  }
  if (change.kind === 'stop-oxygen') {
    return true;
  }
  if (change.kind === 'set-flow') {
    const running = order.flowLPerMin ?? facts.o2FlowLPerMin[0]?.value;
    return running !== undefined && change.flowLPerMin < running;
  }
  if (change.kind === 'set-device') {
    const suggested = estimateDelivery(change.device, {
      flowLPerMin: change.flowLPerMin,
      ...(change.setFio2Fraction === undefined ? {} : { setFio2Fraction: change.setFio2Fraction }),
      ...(assessment.current.respRate === undefined ? {} : { respRatePerMin: assessment.current.respRate.value }),
    });
    if (suggested.kind !== 'ok') {
      return false;
    }
    const atReading = assessment.physiology.fio2AtSpo2;
    const now = [
      assessment.delivery.kind === 'ok' ? assessment.delivery.value.fio2.estimate : undefined,
      atReading.kind === 'ok' && atReading.value.basis !== 'order-estimate' ? atReading.value.estimate : undefined,
    ];
    return now.some((fio2) => fio2 !== undefined && suggested.value.fio2.estimate < fio2 - SAME_FIO2_WITHIN);
  }
  return false;
}
