import { newestFirst } from '../assessment/current-values.js';
import { formatRange } from '../assessment/format.js';
import type { Finding } from '../types.js';
import { describeAge, describeOrder, describeRiskReasons } from './support/describe.js';
import { givesOxygen } from './support/order-purpose.js';
import { makeFinding } from './support/make-finding.js';
import { repeatGasWindow } from './support/repeat-gas-window.js';
import type { Rule } from './support/rule-types.js';
import { citedGuidelineLabel } from './support/cited-guideline.js';
import { readingMs } from '../time/reading-time.js';

/**
 * A patient at risk of hypercapnic respiratory failure (including one re-targeted after a normal gas)
 * is having oxygen started or changed, and no gas has been taken since: the order was written after
 * the latest gas, or the O2 flow was last changed after it.
 *
 * Rationale: BTS 2017 (Tables 2–4) advises a repeat blood gas 30–60 minutes after starting or
 * changing oxygen in these patients, to catch a rising PCO2. The window comes from
 * `thresholds.repeatGasMinutes` and is shown relative to now, counted from the order time (or now,
 * when it has none) or the last recorded flow change, whichever is later. Info while the window is
 * ahead or open; warning once it has passed.
 * Source: BTS 2017 Tables 2–4.
 */
export const rule: Rule = {
  id: 'repeat-blood-gas-due',
  title: 'Repeat blood gas due after starting or changing oxygen',
  version: 3,
  hooks: ['order-sign'],
  defaultIndicator: 'info',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const { order, hypercapnicRisk } = assessment;
    // Comfort oxygen in terminal care is not titrated to a gas (BTS 2017), and an order that stops
    // oxygen changes nothing a gas would guide.
    if (order === undefined || !hypercapnicRisk.atRisk || !givesOxygen(order) || order.purpose === 'comfort') {
      return [];
    }
    const authored = order.authoredOn === undefined ? Number.NaN : Date.parse(order.authoredOn);
    const orderedAt = Number.isNaN(authored) ? now.getTime() : authored;
    const flows = newestFirst(facts.o2FlowLPerMin);
    const changeIndex = flows.findIndex((f, i) => flows[i + 1] !== undefined && flows[i + 1]?.value !== f.value);
    const flowChangedAt = changeIndex < 0 ? undefined : Date.parse(flows[changeIndex]?.at ?? '');
    const changedAt = Math.max(orderedAt, flowChangedAt ?? Number.NEGATIVE_INFINITY);
    const latestGas = newestFirst([...facts.bloodGases, ...facts.historicBloodGases])[0];
    if (latestGas !== undefined && readingMs(latestGas) >= changedAt) {
      return [];
    }
    const { repeatWindow, closesIn, dueWindow } = repeatGasWindow(changedAt, now, policy.thresholds.repeatGasMinutes);
    // Without a current gas the first one is due now: it decides the range (BTS 2017 Tables 2-4).
    const noCurrentGas = assessment.current.gas === undefined;
    const standard = formatRange(policy.targets.standard);
    const headline = noCurrentGas
      ? 'Blood gas advised now: no current gas'
      : `Repeat blood gas due ${dueWindow} after this oxygen change`;
    const gasAdvice = noCurrentGas
      ? `There is no current blood gas. ${citedGuidelineLabel(policy, rule.id)} advises one now for a patient at risk: if the ` +
        `PCO2 is normal and there has been no hypercapnic failure, the range becomes ${standard}; then ` +
        `again ${repeatWindow} after starting or changing oxygen`
      : `${citedGuidelineLabel(policy, rule.id)} advises a repeat blood gas ${repeatWindow} after ` +
        `starting or changing oxygen in these patients, because the PaCO2 may rise without an obvious ` +
        `change in the patient: due ${dueWindow}`;
    return [
      makeFinding(rule, {
        indicator: closesIn < 0 && !noCurrentGas ? 'warning' : rule.defaultIndicator,
        // About the patient, not one order: two drafts signed together get one card.
        orderReference: undefined,
        values: {
          orderDescription: describeOrder(order),
          dueWindow,
          repeatWindow,
          lastGas: latestGas === undefined ? 'none on record' : describeAge(latestGas, now),
          riskReasons: describeRiskReasons(assessment),
          headline,
          gasAdvice,
        },
        sourceKeys: ['bts-2017'],
      }),
    ];
  },
};
