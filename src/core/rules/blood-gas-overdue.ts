import { newestFirst } from '../assessment/current-values.js';
import { formatFlow, formatFraction } from '../assessment/format.js';
import { readingsInWindow } from '../titration/titration-review.js';
import type { DeviceKind, Facts, Finding, OxygenOrder } from '../types.js';
import { describeAge, describeOrder, describeRiskReasons } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { givesOxygen } from './support/order-purpose.js';
import { repeatGasWindow } from './support/repeat-gas-window.js';
import type { Rule } from './support/rule-types.js';
import { readingMs } from '../time/reading-time.js';

/** Devices on which a higher recorded flow gives more oxygen; on a Venturi or high flow it does not. */
const FLOW_RAISES_OXYGEN: readonly (DeviceKind | undefined)[] = [
  'nasal-cannula',
  'simple-face-mask',
  'reservoir-mask',
  'tracheostomy-mask',
];

/** Recorded FiO2 steps smaller than this are recording noise, not a change (FiO2 is set in hundredths). */
const FIO2_STEP_AT_LEAST = 0.01;

interface OxygenRaise {
  readonly atMs: number;
  readonly what: string;
}

/**
 * The latest start or rise of oxygen in the window: the order written, a recorded FiO2 higher than the
 * one before it, a recorded flow higher than the one before it on a device whose flow sets the oxygen,
 * or any flow after a recorded 0 L/min (oxygen restarted).
 */
function latestRaise(facts: Facts, order: OxygenOrder, now: Date, windowMinutes: number): OxygenRaise | undefined {
  const raises: OxygenRaise[] = [];
  const startMs = now.getTime() - windowMinutes * 60_000;
  const authored = order.authoredOn === undefined ? Number.NaN : Date.parse(order.authoredOn);
  if (!Number.isNaN(authored) && authored >= startMs && authored <= now.getTime()) {
    raises.push({ atMs: authored, what: `oxygen ordered (${describeOrder(order)})` });
  }
  const fio2 = readingsInWindow(facts.trendReadings.fio2Fraction, now, windowMinutes);
  for (const [i, reading] of fio2.entries()) {
    const before = fio2[i - 1];
    if (before !== undefined && reading.value - before.value >= FIO2_STEP_AT_LEAST) {
      raises.push({ atMs: readingMs(reading), what: `recorded FiO2 raised ${formatFraction(before.value)} → ${formatFraction(reading.value)}` });
    }
  }
  const flows = readingsInWindow(facts.trendReadings.o2FlowLPerMin, now, windowMinutes);
  for (const [i, reading] of flows.entries()) {
    const before = flows[i - 1];
    const restarted = before?.value === 0 && reading.value > 0;
    if (before !== undefined && reading.value > before.value && (restarted || FLOW_RAISES_OXYGEN.includes(order.device))) {
      raises.push({ atMs: readingMs(reading), what: `recorded O2 flow raised ${formatFlow(before.value)} → ${formatFlow(reading.value)}` });
    }
  }
  return raises.sort((a, b) => b.atMs - a.atMs)[0];
}

/**
 * A patient at risk of hypercapnic respiratory failure whose oxygen was started or raised within the
 * look-back window (`titrationReview.lookbackHours`: the active order written, a higher recorded FiO2,
 * or a higher recorded flow on a device whose flow sets the oxygen) has had no blood gas since, and the
 * repeat-gas window (`thresholds.repeatGasMinutes`, 30–60 min) has closed.
 *
 * Rationale: BTS 2017 (Tables 2–4) advises a repeat blood gas 30–60 minutes after starting or
 * increasing oxygen in these patients, because the PaCO2 may rise without an obvious change in the
 * patient. On patient-view the gas is reviewed after the fact, so only an overdue gas is a card (a gas
 * still due is repeat-blood-gas-due's, at signing); the window arithmetic is shared with it
 * (support/repeat-gas-window.ts). A warning. Not for comfort, stop or room-air orders.
 * Source: BTS 2017, Tables 2–4 (check-values.md §1d, verified).
 */
export const rule: Rule = {
  id: 'blood-gas-overdue',
  title: 'Blood gas overdue after oxygen was started or raised',
  version: 1,
  hooks: ['patient-view'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const { order, hypercapnicRisk } = assessment;
    if (order === undefined || !hypercapnicRisk.atRisk || !givesOxygen(order) || order.purpose === 'comfort') {
      return [];
    }
    const raise = latestRaise(facts, order, now, policy.titrationReview.lookbackHours * 60);
    if (raise === undefined) {
      return [];
    }
    const latestGas = newestFirst([...facts.bloodGases, ...facts.historicBloodGases])[0];
    if (latestGas !== undefined && readingMs(latestGas) >= raise.atMs) {
      return [];
    }
    const window = repeatGasWindow(raise.atMs, now, policy.thresholds.repeatGasMinutes);
    if (window.closesIn >= 0) {
      return [];
    }
    const raisedAt = describeAge(new Date(raise.atMs).toISOString(), now);
    return [
      makeFinding(rule, {
        orderReference: undefined,
        values: {
          raise: raise.what,
          raisedAt,
          repeatWindow: window.repeatWindow,
          dueWindow: window.dueWindow,
          lastGas: latestGas === undefined ? 'none on record' : describeAge(latestGas, now),
          riskReasons: describeRiskReasons(assessment),
          orderDescription: describeOrder(order),
        },
        sourceKeys: ['bts-2017'],
      }),
    ];
  },
};
