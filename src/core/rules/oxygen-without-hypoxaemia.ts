import { formatFlow, formatFraction, formatPercent, formatRange } from '../assessment/format.js';
import type { Assessment } from '../assessment/types.js';
import { ROOM_AIR_FIO2 } from '../physiology/constants.js';
import type { Policy } from '../policy.js';
import type { ConditionFact, ConditionKind, Facts, Finding, Measured } from '../types.js';
import { describeAge, describeMeasured, describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { readingMs } from '../time/reading-time.js';
import { isTitration } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';
import { citedGuidelineLabel } from './support/cited-guideline.js';

/**
 * How the SpO2 is known to have been taken on air, in words for the card; undefined when it is not
 * known. Only a recorded FiO2 of 0.21 or a recorded O2 flow of 0 near the reading counts, and only
 * when no oxygen (a higher FiO2, a flow above 0, an oxygen order on record) was recorded between
 * that observation and the reading. A reading with nothing recorded about oxygen is not assumed to
 * be on air: the patient may be on oxygen given before any order (ambulance, emergency department).
 */
function airAtReading(assessment: Assessment, facts: Facts, spo2: Measured, now: Date): string | undefined {
  const fio2 = assessment.physiology.fio2AtSpo2;
  if (fio2.kind !== 'ok' || fio2.value.basis === 'order-estimate' || !fio2.value.onAir || fio2.value.at === undefined) {
    return undefined;
  }
  const airMs = Date.parse(fio2.value.at);
  const spo2Ms = readingMs(spo2);
  const from = Math.min(airMs, spo2Ms);
  const to = Math.max(airMs, spo2Ms);
  const between = (at: string | undefined): boolean => {
    const ms = at === undefined ? Number.NaN : Date.parse(at);
    return ms >= from && ms <= to;
  };
  const oxygenBetween =
    facts.fio2Fraction.some((m) => between(m.at) && m.value > ROOM_AIR_FIO2) ||
    facts.o2FlowLPerMin.some((m) => between(m.at) && m.value > 0) ||
    facts.activeOrders.some((o) => o.authoredOn !== undefined && between(o.authoredOn) && Date.parse(o.authoredOn) > from);
  if (oxygenBetween) {
    return undefined;
  }
  const what = fio2.value.basis === 'recorded-fio2' ? `FiO2 ${formatFraction(fio2.value.estimate)}` : `O2 flow ${formatFlow(0)}`;
  return `${what} recorded ${describeAge(fio2.value.at, now)}`;
}

/** One sentence a condition adds to the card, where a source says more than "only if hypoxaemic". */
function conditionNote(kind: ConditionKind, policy: Policy): string | undefined {
  if (kind === 'acute-coronary-syndrome' || kind === 'stroke') {
    // BMJ 2018 (verified): do not start oxygen at SpO2 >= 93 % in acute stroke or myocardial infarction.
    return 'in acute stroke and myocardial infarction a later guideline advises not starting oxygen at an SpO2 of 93 % or more (BMJ 2018)';
  }
  if (kind === 'sickle-cell-crisis') {
    // BTS 2008 Table 2 (verified): hypoxaemic means below the target or the patient's known usual saturation.
    return "in a sickle cell crisis, hypoxaemic also means below the patient's known usual saturation";
  }
  if (kind === 'pregnancy') {
    // BTS 2017, pregnancy section (quoted secondarily): no oxygen in uncomplicated labour unless SpO2 < 94 %.
    // The number is the policy's lower bound (BTS 2017: 94 %), so the words say whose it is.
    return `in uncomplicated labour ${citedGuidelineLabel(policy, 'oxygen-without-hypoxaemia')} advises no oxygen unless SpO2 is below the target range (here ${formatPercent(policy.targets.standard.lowPercent)})`;
  }
  return undefined;
}

/** The listed conditions on record, one per kind, in the order the record gives them. */
function listedConditions(facts: Facts, policy: Policy): ConditionFact[] {
  const listed: ConditionFact[] = [];
  for (const condition of facts.conditions) {
    if (policy.specialConditions.oxygenOnlyIfHypoxaemic.includes(condition.kind) && !listed.some((c) => c.kind === condition.kind)) {
      listed.push(condition);
    }
  }
  return listed;
}

/**
 * Oxygen is ordered to titrate, and the latest SpO2, taken on air, is at or above the lower bound of
 * the range being titrated to: oxygen is not needed unless the saturation falls below it.
 *
 * Rationale: oxygen treats hypoxaemia, not breathlessness. BTS 2017 Table 3 gives oxygen only to
 * hypoxaemic patients with acute coronary syndromes, stroke, pregnancy and obstetric emergencies,
 * anxiety and hyperventilation and most poisonings, and Table 2 (BTS 2008 Table 2, verified) does so
 * in sickle cell crisis; BMJ 2018 advises against starting oxygen at SpO2 ≥ 93 % in acute stroke or
 * myocardial infarction. The conditions are the policy list `specialConditions.oxygenOnlyIfHypoxaemic`.
 * For a patient with a listed condition the rule fires from the lower bound up. Without one, an
 * order to a target range for a patient already in range on air is the standing prescription BTS
 * 2017 asks for (oxygen given only if the saturation falls), so the rule fires only above the upper
 * bound, where any oxygen takes the saturation further from the target.
 * "On air" is known only from a recorded FiO2 of 0.21 or O2 flow of 0 near the reading (see
 * `airAtReading`). Comfort, stop, weaning and room-air orders are not titrations and are skipped;
 * paraquat and bleomycin are left to `oxygen-toxicity-target` until 85–88 % is ordered.
 * Info; warning when the at-risk range applies (BTS 2017 Table 4: oxygen that is not needed can
 * raise the PaCO2 of a patient at risk of hypercapnia). No change is offered: an update cannot
 * withdraw an order, so the card says so in words.
 * Sources: BTS 2017 Tables 2–4; BTS 2008 Table 2; BMJ 2018.
 */
export const rule: Rule = {
  id: 'oxygen-without-hypoxaemia',
  title: 'Oxygen ordered for a patient not hypoxaemic on air',
  version: 2,
  hooks: ['order-sign'],
  defaultIndicator: 'info',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const { order, titrationTarget, target, current } = assessment;
    const spo2 = current.spo2;
    if (order === undefined || !isTitration(order) || titrationTarget === undefined || spo2 === undefined) {
      return [];
    }
    // Paraquat or bleomycin without 85-88 % ordered is oxygen-toxicity-target's warning; once that
    // range is ordered, SpO2 above it on air is this rule's, as for anyone else.
    if (assessment.targetComparison.kind === 'toxicity-range-not-ordered') {
      return [];
    }
    const { lowPercent, highPercent } = titrationTarget.range;
    const listed = listedConditions(facts, policy);
    const threshold = listed.length > 0 ? spo2.value >= lowPercent : spo2.value > highPercent;
    if (!threshold) {
      return [];
    }
    const airEvidence = airAtReading(assessment, facts, spo2, now);
    if (airEvidence === undefined) {
      return [];
    }
    const atRisk = target.kind === 'range' && target.basis === 'hypercapnic-risk';
    const notes = [...new Set(listed.flatMap((c) => conditionNote(c.kind, policy) ?? []))];
    const reason =
      listed.length === 0
        ? 'Oxygen now would only take the saturation further above the target.'
        : `${listed.map((c) => c.display).join('; ')} recorded: the local policy lists ` +
          `${listed.length === 1 ? 'it' : 'them'} among the conditions in which oxygen is given only for ` +
          `hypoxaemia (BTS 2017 Tables 2 and 3)${notes.length === 0 ? '' : `; ${notes.join('; ')}`}.`;
    const bmj = listed.some((c) => c.kind === 'acute-coronary-syndrome' || c.kind === 'stroke');
    return [
      makeFinding(rule, {
        indicator: atRisk ? 'warning' : rule.defaultIndicator,
        orderReference: order.reference,
        values: {
          spo2: describeMeasured(spo2, now, '%'),
          airEvidence,
          position: `${spo2.value > highPercent ? 'above' : 'within'} the target ${formatRange(titrationTarget.range)}`,
          lowBound: formatPercent(lowPercent),
          reason,
          harm: atRisk
            ? 'In a patient at risk of hypercapnic respiratory failure, oxygen that is not needed can raise the PaCO2.'
            : 'Oxygen that is not needed brings no benefit.',
          orderDescription: describeOrder(order),
        },
        sourceKeys: ['bts-2017', ...(bmj ? ['bmj-2018'] : [])],
      }),
    ];
  },
};
