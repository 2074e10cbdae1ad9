import { isWithin } from '../assessment/current-values.js';
import { formatDuration, formatFlow, formatFraction, formatPercent } from '../assessment/format.js';
import { DEVICE_MODELS } from '../devices/index.js';
import type { DeviceKind, Facts, Finding, Measured, OxygenOrder } from '../types.js';
import { describeAge, deviceLabel } from './support/describe.js';
import { escalatedSupportFailingSpeaks } from './support/escalated-support.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/**
 * Devices on which a higher O2 flow always means more oxygen breathed (variable performance, no set
 * FiO2): only on these are two recorded flows compared, and only when one of them is named
 * (`flowDevice`). A Venturi's flow does not set its FiO2, high flow's FiO2 is its blender setting, and a
 * recorded flow (LOINC 3151-8) names no device, so across devices flows say nothing.
 */
const FLOW_SETS_OXYGEN: readonly DeviceKind[] = ['nasal-cannula', 'simple-face-mask', 'reservoir-mask', 'tracheostomy-mask'];

/** Oldest first, within the trend window and not in the future. */
function inWindow(items: readonly Measured[], now: Date, windowMinutes: number): readonly Measured[] {
  return items
    .filter((m) => isWithin(m.at, now, windowMinutes) && Date.parse(m.at) <= now.getTime())
    .sort((a, b) => Date.parse(a.at) - Date.parse(b.at));
}

/** The oxygen given at the two ends of the window, in one comparable measure. */
interface OxygenTrend {
  readonly first: Measured;
  readonly last: Measured;
  /** Positive when more oxygen at the end, negative when less, 0 when the same. */
  readonly direction: number;
  readonly words: (m: Measured) => string;
  readonly measure: string;
  /** Names the measure in the short headline: "FiO2 " for FiO2, nothing for a flow (its unit says it). */
  readonly label: string;
}

interface FlowDevice {
  readonly device: DeviceKind;
  /** True when orders on record name it; false when only this order does. */
  readonly fromRecord: boolean;
}

/**
 * The one flow-set device the recorded flows were given on: the device every order on record names,
 * or with no order on record the device this order names. Undefined when that is not one flow-set
 * device, or when a recorded flow is above the device's top flow (it was given on something else).
 */
function flowDevice(facts: Facts, order: OxygenOrder | undefined, flows: readonly Measured[]): FlowDevice | undefined {
  const fromRecord = facts.activeOrders.length > 0;
  const devices = new Set((fromRecord ? facts.activeOrders : order === undefined ? [] : [order]).map((o) => o.device));
  const [device] = [...devices];
  if (devices.size !== 1 || device === undefined || !FLOW_SETS_OXYGEN.includes(device)) {
    return undefined;
  }
  const top = DEVICE_MODELS[device].flowRangeLPerMin.max;
  return flows.every((f) => f.value <= top) ? { device, fromRecord } : undefined;
}

/**
 * Recorded FiO2 (LOINC 3150-0) compares across devices; recorded flows only on one flow-set device
 * (`flowDevice`). Two readings at least: a single reading shows no trend.
 */
function oxygenTrend(facts: Facts, order: OxygenOrder | undefined, now: Date, windowMinutes: number): OxygenTrend | undefined {
  const fio2 = inWindow(facts.trendReadings.fio2Fraction, now, windowMinutes);
  const compare = (first: Measured, last: Measured): number => Math.round(last.value * 100) - Math.round(first.value * 100);
  const [firstFio2, lastFio2] = [fio2[0], fio2[fio2.length - 1]];
  if (fio2.length >= 2 && firstFio2 !== undefined && lastFio2 !== undefined) {
    return {
      first: firstFio2,
      last: lastFio2,
      direction: compare(firstFio2, lastFio2),
      words: (m) => formatFraction(m.value),
      measure: 'recorded FiO2',
      label: 'FiO2 ',
    };
  }
  const flows = inWindow(facts.trendReadings.o2FlowLPerMin, now, windowMinutes);
  const [firstFlow, lastFlow] = [flows[0], flows[flows.length - 1]];
  const named = flowDevice(facts, order, flows);
  if (named === undefined || flows.length < 2 || firstFlow === undefined || lastFlow === undefined) {
    return undefined;
  }
  const device = deviceLabel(named.device).toLowerCase();
  return {
    first: firstFlow,
    last: lastFlow,
    direction: compare(firstFlow, lastFlow),
    words: (m) => formatFlow(m.value),
    measure: named.fromRecord
      ? `recorded O2 flow (${device} throughout)`
      : `recorded O2 flow (${device}, as this order names; none on record)`,
    label: '',
  };
}

/**
 * With no setting recorded in the window, the oxygen counts as unchanged when one order on record,
 * written before the window's first SpO2, was running throughout.
 */
function unchangedByOrder(facts: Facts, since: Measured): boolean {
  const written = facts.activeOrders.map((o) => (o.authoredOn === undefined ? Number.NaN : Date.parse(o.authoredOn)));
  return written.length === 1 && written.every((t) => !Number.isNaN(t) && t <= Date.parse(since.at));
}

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
 * Sources: BTS 2017 summary (BMJ Open Resp Res 4:e000170); the window is the local policy's.
 */
export const rule: Rule = {
  id: 'rising-oxygen-need',
  title: 'Rising oxygen need: review the patient',
  version: 2,
  hooks: ['order-sign'],
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
    const readings = inWindow(facts.trendReadings.spo2Percent, now, windowMinutes);
    const [firstSpo2, lastSpo2] = [readings[0], readings[readings.length - 1]];
    if (firstSpo2 === undefined || lastSpo2 === undefined) {
      return [];
    }
    const twoSpo2 = readings.length >= 2;
    const fall = twoSpo2 ? firstSpo2.value - lastSpo2.value : 0;
    const rise = -fall;
    const trend = oxygenTrend(facts, order, now, windowMinutes);
    const settingsRecorded =
      inWindow(facts.trendReadings.fio2Fraction, now, windowMinutes).length +
        inWindow(facts.trendReadings.o2FlowLPerMin, now, windowMinutes).length >
      0;

    const moreOxygen = trend !== undefined && trend.direction > 0 && rise < spo2FallPoints;
    const notLowered =
      trend !== undefined ? trend.direction >= 0 : !settingsRecorded && unchangedByOrder(facts, firstSpo2);
    const fellDespite = twoSpo2 && fall >= spo2FallPoints && notLowered;
    if (!moreOxygen && !fellDespite) {
      return [];
    }

    const at = (m: Measured): string => describeAge(m.at, now);
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
