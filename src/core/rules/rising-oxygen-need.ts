import { formatDuration, formatPercent } from '../assessment/format.js';
import type { Finding, Measured } from '../types.js';
import { describeAge } from './support/describe.js';
import { escalatedSupportFailingSpeaks } from './support/escalated-support.js';
import { makeFinding } from './support/make-finding.js';
import { findRisingOxygenNeed } from './support/oxygen-trend.js';
import type { Rule } from './support/rule-types.js';

/**
 * A rising oxygen need: over the last `thresholds.oxygenNeedTrendMinutes` (360), more oxygen was
 * given (recorded FiO2, or recorded flows on one flow-set device: the one every order on record
 * names, else the one this order names, with no recorded flow above its top flow) while SpO2 did not rise by
 * `thresholds.spo2FallPoints` (3) or more, or SpO2 fell by `thresholds.spo2FallPoints` or more while
 * the oxygen was not lowered (by the same measures, or one order running throughout with no setting
 * recorded). The card says what changed and when.
 *
 * Rationale: a fall in SpO2 of 3 points or more, or a rising oxygen requirement, calls for fuller
 * assessment even within the target range (BTS 2017 summary: a fall of ≥ 3 %, verified; the rising
 * requirement from memory). Warning. Noise: two readings of each series at least; the ends of the
 * window are compared, so a reading that goes up and comes back shows no trend; a lower oxygen (the
 * weaning direction) never fires, nor a fall in SpO2 while oxygen is lowered. Patient-level. Not where
 * no SpO2 target applies (oxygen given whatever the SpO2), for comfort orders, or when
 * escalated-support-failing already asks for critical-care review.
 * Readings come from `facts.trendReadings`, kept over the longer of the vital-signs and trend
 * windows, so a trend that began 5 h ago is seen while no other rule treats that reading as current.
 * On patient-view the subject is the active oxygen order on record, and the same check reviews the
 * patient's recent course (the titration review's rising-need card).
 * Sources: BTS 2017 summary (BMJ Open Resp Res 4:e000170); the window is the local policy's.
 */
export const rule: Rule = {
  id: 'rising-oxygen-need',
  title: 'Rising oxygen need: review the patient',
  version: 2,
  hooks: ['order-sign', 'patient-view'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, facts, policy, now }): readonly Finding[] => {
    const { target, order } = assessment;
    if (target.kind === 'no-spo2-target' || order?.purpose === 'comfort') {
      return [];
    }
    if (escalatedSupportFailingSpeaks(assessment, facts, policy, now)) {
      return [];
    }
    const { oxygenNeedTrendMinutes: windowMinutes, spo2FallPoints } = policy.thresholds;
    const rising = findRisingOxygenNeed(facts, order, now, windowMinutes, spo2FallPoints);
    if (rising === undefined) {
      return [];
    }
    const { firstSpo2, lastSpo2, twoSpo2, fall, trend, fellDespite } = rising;

    const at = (m: Measured): string => describeAge(m, now);
    const spo2Words = (m: Measured): string => formatPercent(m.value);
    const oxygenChange =
      trend === undefined
        ? 'oxygen unchanged (one order on record throughout, no setting recorded)'
        : trend.direction === 0
          ? `${trend.measure} unchanged at ${trend.words(trend.last)} (${at(trend.first)} and ${at(trend.last)})`
          : `${trend.measure} rose from ${trend.words(trend.first)} (${at(trend.first)}) to ${trend.words(trend.last)} (${at(trend.last)})`;
    const spo2Change = twoSpo2
      ? `SpO2 ${fall >= spo2FallPoints ? 'fell' : 'went'} from ${spo2Words(firstSpo2)} (${at(firstSpo2)}) to ${spo2Words(lastSpo2)} (${at(lastSpo2)})`
      : `SpO2 ${spo2Words(lastSpo2)} (${at(lastSpo2)}), the only reading in the window`;
    const span = formatDuration((now.getTime() - Date.parse((trend?.first ?? firstSpo2).at)) / 60_000);
    const headline = fellDespite
      ? `SpO2 fell ${spo2Words(firstSpo2)} → ${spo2Words(lastSpo2)} over ${span} ${trend !== undefined && trend.direction > 0 ? 'despite more oxygen' : 'on unchanged oxygen'}`
      : `more oxygen (${trend?.label ?? ''}${trend?.words(trend.first) ?? ''} → ${trend?.words(trend.last) ?? ''}) over ${span} for SpO2 ${twoSpo2 ? `${spo2Words(firstSpo2)} → ` : ''}${spo2Words(lastSpo2)}`;
    return [
      makeFinding(rule, {
        orderReference: undefined,
        values: {
          headline,
          oxygenChange,
          spo2Change,
          window: formatDuration(windowMinutes),
          fallPoints: String(spo2FallPoints),
        },
        sourceKeys: ['bts-2017', 'local-policy'],
      }),
    ];
  },
};
