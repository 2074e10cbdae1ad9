import {
  RICE_SF_CUTOFFS,
  classifySfRice,
  interpretBloodGas,
  interpretRoxAt,
  oxygenContentMlPerDl,
  po2FromSaturationMmHg,
  roxFailureBelow,
  roxIndex,
  roxTimePoint,
  saturationFromPo2,
  sfRatio,
} from '../physiology/index.js';
import type { RoxTimePoint } from '../physiology/index.js';
import { tierShownByRecordedFlow } from '../devices/device-tier.js';
import {
  HUFNER_CLINICAL_ML_PER_G,
  OXYGEN_SOLUBILITY_ML_PER_DL_PER_MMHG,
} from '../physiology/constants.js';
import { checkPhysiologyInputs, PHYSIOLOGY_VALID_RANGES } from '../physiology/valid-ranges.js';
import type { Policy } from '../policy.js';
import type { BloodGas, Measured, Outcome, OxygenOrder } from '../types.js';
import { formatDuration, formatFraction, formatNumber, formatRatio } from './format.js';
import { describeFio2Basis } from './gas-physiology.js';
import { ratioOverFio2Range } from './oxygenation-ratio.js';

/** Rice 2007 published S/F cut-offs; each belongs to the band below it, as classifySfRice places it. */
export const RICE_CUTOFFS: readonly number[] = [RICE_SF_CUTOFFS.pf200, RICE_SF_CUTOFFS.pf300];
import type { Fio2InForce, PhysiologyResults } from './types.js';
import { sortByTime } from '../time/sort-by-time.js';
import { readingMs } from '../time/reading-time.js';

/** S/F from the current SpO2 and the FiO2 in force when it was read (Rice 2007; not above 97 %). */
export function computeSfRatio(
  spo2: Measured | undefined,
  fio2AtSpo2: Outcome<Fio2InForce>,
): PhysiologyResults['sfRatio'] {
  if (spo2 === undefined) {
    return { kind: 'unknown', reason: 'no current SpO2', missing: ['SpO2'] };
  }
  if (fio2AtSpo2.kind === 'unknown') {
    return { kind: 'unknown', reason: `FiO2 not known: ${fio2AtSpo2.reason}`, missing: ['FiO2'] };
  }
  const checked = checkPhysiologyInputs({
    spo2Percent: spo2.value,
    fio2Fraction: fio2AtSpo2.value.estimate,
  });
  if (checked.kind === 'unknown') {
    return checked;
  }
  const ratio = sfRatio(checked.value.spo2Percent, checked.value.fio2Fraction);
  if (ratio.kind === 'unknown') {
    return ratio;
  }
  const fio2 = fio2AtSpo2.value;
  const { min, max } = PHYSIOLOGY_VALID_RANGES.sfRatio;
  const sf = ratioOverFio2Range({
    numerator: spo2.value,
    fio2,
    compute: (sat, fraction) => sat / fraction,
    // An end of a wide FiO2 range may fall outside what the classifier accepts; the band is judged there.
    classify: (value) => classifySfRice(Math.min(max, Math.max(min, value))),
    cutoffsLowerInclusive: RICE_CUTOFFS,
  });
  return {
    kind: 'ok',
    value: {
      value: { ratio: ratio.value, low: sf.low, high: sf.high, spannedCutoffs: sf.spannedCutoffs, fio2, rice: sf.band },
      computation: {
        name: 'S/F ratio',
        formula: 'S/F = SpO2 (%) / FiO2',
        substituted:
          `${formatNumber(spo2.value, 1)} / ${formatFraction(fio2.estimate)} ` +
          `(${describeFio2Basis(fio2)})`,
        result: formatRatio(sf, RICE_CUTOFFS),
        sourceKey: 'rice-2007',
      },
    },
  };
}

/**
 * What the record shows about high flow at the SpO2 reading: whether the patient was on it, its set
 * FiO2 on the order in force, and how long it had run. Undefined when nothing shows high flow.
 */
export interface HighFlowAtReading {
  /** The blender FiO2 the high-flow order in force sets, when it states one. */
  readonly orderedSetFio2: number | undefined;
  /** Hours since high flow began, when the record shows when; undefined when it does not. */
  readonly hoursOnHighFlow: number | undefined;
  /** Plain words for how the start was known, for the card. */
  readonly startBasis: string;
}

const HOUR_MS = 3_600_000;

function earliestMs(times: readonly (string | undefined)[]): number | undefined {
  const parsed = times.map((t) => (t === undefined ? Number.NaN : Date.parse(t))).filter((t) => !Number.isNaN(t));
  return parsed.length === 0 ? undefined : Math.min(...parsed);
}

/**
 * Was the patient on high flow when `spo2` was read, and since when? On high flow means a high-flow
 * order active on record, this order if it was written before the reading, or a recorded O2 flow at
 * or before the reading that only high flow reaches. A new high-flow order written after the reading
 * is the response to it: the reading was not taken on high flow.
 *
 * The start is the time the earliest high-flow order in force was written; a recorded high flow
 * before that moves it earlier, since the data shows high flow running then. When an order in force
 * has no time, or only recorded flows show high flow, the start is unknown (a recorded flow shows
 * only that high flow ran at least since then, never when it began).
 */
export function highFlowAtReading(
  activeOrders: readonly OxygenOrder[],
  order: OxygenOrder | undefined,
  recordedFlows: readonly Measured[],
  spo2: Measured | undefined,
  now: Date,
): HighFlowAtReading | undefined {
  if (spo2 === undefined) {
    return undefined;
  }
  const readAt = readingMs(spo2);
  const isHighFlow = (o: OxygenOrder): boolean => o.device === 'high-flow-nasal-cannula';
  const onRecord = activeOrders.filter(isHighFlow);
  const subjectInForce =
    order !== undefined && isHighFlow(order) && order.authoredOn !== undefined && Date.parse(order.authoredOn) <= readAt;
  const recorded = recordedFlows.filter(
    (flow) => tierShownByRecordedFlow(flow.value) === 'high-flow' && readingMs(flow) <= readAt,
  );
  const inForce = [...onRecord, ...(subjectInForce && order !== undefined ? [order] : [])];
  if (inForce.length === 0 && recorded.length === 0) {
    return undefined;
  }
  // The set FiO2 running at the reading: the newest high-flow order on record, else this order.
  const newestOnRecord = sortByTime(onRecord, (o) => o.authoredOn ?? '', 'newest-first');
  const orderedSetFio2 = [...newestOnRecord, ...inForce].find((o) => o.setFio2Fraction !== undefined)?.setFio2Fraction;
  // An order in force with no readable time may be the earliest, so the start is then unknown.
  const timed = inForce.every((o) => o.authoredOn !== undefined && !Number.isNaN(Date.parse(o.authoredOn)));
  const orderStart = timed ? earliestMs(inForce.map((o) => o.authoredOn)) : undefined;
  const recordedStart = earliestMs(recorded.map((flow) => flow.at));
  if (orderStart === undefined) {
    return {
      orderedSetFio2,
      hoursOnHighFlow: undefined,
      startBasis:
        recordedStart === undefined
          ? 'no high-flow order in force says when it was written'
          : `high flow is recorded from ${formatDuration((now.getTime() - recordedStart) / 60_000)} ago, but no ` +
            'high-flow order in force says when it began',
    };
  }
  const fromRecord = recordedStart !== undefined && recordedStart < orderStart;
  const start = fromRecord ? recordedStart : orderStart;
  const ago = formatDuration((now.getTime() - start) / 60_000);
  return {
    orderedSetFio2,
    hoursOnHighFlow: Math.max(0, (now.getTime() - start) / HOUR_MS),
    startBasis: fromRecord
      ? `from the first recorded high flow, ${ago} ago, before the earliest high-flow order`
      : `from the earliest high-flow order, written ${ago} ago`,
  };
}

/** The FiO2 ROX uses on high flow: the recorded FiO2 at the reading, else the order's set FiO2. */
/**
 * The FiO2 a patient on high flow was breathing when the SpO2 was read: the FiO2 recorded at the
 * reading, else the set FiO2 of the high-flow order in force; undefined when neither is known.
 */
export function highFlowFio2AtReading(
  fio2AtSpo2: Outcome<Fio2InForce>,
  highFlow: HighFlowAtReading,
): { readonly fraction: number; readonly from: 'recorded' | 'ordered' } | undefined {
  if (fio2AtSpo2.kind === 'ok' && fio2AtSpo2.value.basis === 'recorded-fio2') {
    return { fraction: fio2AtSpo2.value.estimate, from: 'recorded' };
  }
  return highFlow.orderedSetFio2 === undefined ? undefined : { fraction: highFlow.orderedSetFio2, from: 'ordered' };
}

/**
 * ROX index while on high-flow nasal cannula (Roca 2019), with the set FiO2: on high flow the
 * blender setting is what the patient breathes, so a mixing estimate is never used. The index is
 * read against the Roca threshold for the hours on high flow; when the start is unknown, against the
 * 12-h threshold (3.85), the strictest of the three, so an unknown start never hides a failing index.
 */
export function computeRox(input: {
  readonly highFlow: HighFlowAtReading | undefined;
  readonly spo2: Measured | undefined;
  readonly respRate: Measured | undefined;
  readonly fio2AtSpo2: Outcome<Fio2InForce>;
}): PhysiologyResults['rox'] {
  const { highFlow } = input;
  if (highFlow === undefined) {
    return { kind: 'unknown', reason: 'ROX applies to high-flow nasal cannula only' };
  }
  const atReading = highFlowFio2AtReading(input.fio2AtSpo2, highFlow);
  const setFio2 =
    atReading === undefined
      ? undefined
      : {
          fraction: atReading.fraction,
          words: atReading.from === 'recorded' ? 'FiO2 recorded at the reading' : 'set FiO2 of the high-flow order',
        };
  if (setFio2 === undefined) {
    return { kind: 'unknown', reason: 'the set FiO2 of high flow is neither recorded nor ordered', missing: ['FiO2'] };
  }
  const checked = checkPhysiologyInputs({
    spo2Percent: input.spo2?.value,
    respRatePerMin: input.respRate?.value,
    fio2Fraction: setFio2.fraction,
  });
  if (checked.kind === 'unknown') {
    return checked;
  }
  const { spo2Percent, respRatePerMin, fio2Fraction } = checked.value;
  const index = roxIndex(spo2Percent, fio2Fraction, respRatePerMin);
  const indexInRange = checkPhysiologyInputs({ roxIndex: index });
  if (indexInRange.kind === 'unknown') {
    return indexInRange;
  }
  // Beyond the longest time the interpretation accepts, the 12-h threshold it carries forward applies.
  const hours =
    highFlow.hoursOnHighFlow === undefined
      ? undefined
      : Math.min(highFlow.hoursOnHighFlow, PHYSIOLOGY_VALID_RANGES.hoursOnHighFlow.max);
  const timePoint: RoxTimePoint | undefined = hours === undefined ? 12 : roxTimePoint(hours);
  const threshold =
    timePoint === undefined
      ? undefined
      : { timePoint, failureBelow: roxFailureBelow(timePoint), startKnown: hours !== undefined };
  return {
    kind: 'ok',
    value: {
      value: {
        index,
        hoursOnHighFlow: hours,
        interpretation: timePoint === undefined ? 'indeterminate' : interpretRoxAt(index, timePoint),
        fio2Fraction,
        threshold,
        thresholdNote: describeRoxThreshold(hours, threshold, highFlow.startBasis),
      },
      computation: {
        name: 'ROX index',
        formula: 'ROX = (SpO2 / FiO2) / respiratory rate',
        substituted:
          `(${formatNumber(spo2Percent, 1)} / ${formatFraction(fio2Fraction)}) / ` +
          `${formatNumber(respRatePerMin, 0)} (${setFio2.words})`,
        result: formatNumber(index, 2),
        sourceKey: 'roca-2019',
      },
    },
  };
}

/** Which Roca threshold was used and why, in plain words. */
function describeRoxThreshold(
  hours: number | undefined,
  threshold: { readonly timePoint: RoxTimePoint; readonly failureBelow: number } | undefined,
  startBasis: string,
): string {
  if (threshold === undefined) {
    return `under 2 h on high flow (${startBasis}): Roca 2019 gives no threshold before 2 h`;
  }
  if (hours === undefined) {
    return (
      `start of high flow unknown (${startBasis}): the ${threshold.timePoint}-h threshold, ` +
      `${threshold.failureBelow}, the strictest, was used`
    );
  }
  return `${formatNumber(hours, 1)} h on high flow (${startBasis}): the ${threshold.timePoint}-h threshold, ${threshold.failureBelow}`;
}

/** The oxygen content formula and its constants as the working writes them, each written once. */
const HUFNER_TEXT = String(HUFNER_CLINICAL_ML_PER_G);
const SOLUBILITY_TEXT = String(OXYGEN_SOLUBILITY_ML_PER_DL_PER_MMHG);
const OXYGEN_CONTENT_FORMULA = `CaO2 = ${HUFNER_TEXT} × Hb × SaO2 + ${SOLUBILITY_TEXT} × PaO2`;

/**
 * Arterial oxygen content (1.34 × Hb × SaO2 + 0.003 × PaO2). SaO2 is the current SpO2, else derived
 * from PaO2 (Severinghaus 1979); PaO2 is the arterial value, else derived from SpO2 (Ellis 1989).
 */
export function computeOxygenContent(input: {
  readonly haemoglobin: Measured | undefined;
  readonly spo2: Measured | undefined;
  readonly arterialGas: BloodGas | undefined;
}): PhysiologyResults['oxygenContent'] {
  if (input.haemoglobin === undefined) {
    return { kind: 'unknown', reason: 'no recent haemoglobin', missing: ['haemoglobin'] };
  }
  const checked = checkPhysiologyInputs({ haemoglobinGPerDL: input.haemoglobin.value });
  if (checked.kind === 'unknown') {
    return checked;
  }
  const hb = checked.value.haemoglobinGPerDL;
  const spo2Percent = input.spo2?.value;
  const pao2 = input.arterialGas?.pao2MmHg;
  if (spo2Percent === undefined && pao2 === undefined) {
    return { kind: 'unknown', reason: 'needs an SpO2 or an arterial PaO2', missing: ['SpO2', 'PaO2'] };
  }
  const ranges = [
    spo2Percent === undefined ? undefined : checkPhysiologyInputs({ spo2Percent }),
    pao2 === undefined ? undefined : checkPhysiologyInputs({ pao2MmHg: pao2 }),
  ].find((o) => o?.kind === 'unknown');
  if (ranges?.kind === 'unknown') {
    return ranges;
  }
  // The Ellis inversion has no finite answer at 100 %: without a PaO2 the dissolved term is unknown.
  if (pao2 === undefined && spo2Percent !== undefined && spo2Percent >= 100) {
    return { kind: 'unknown', reason: 'PaO2 cannot be derived from an SpO2 of 100 %', missing: ['PaO2'] };
  }
  const saFraction = spo2Percent !== undefined ? spo2Percent / 100 : saturationFromPo2(pao2 ?? 0);
  const po2MmHg = pao2 ?? po2FromSaturationMmHg(saFraction);
  const content = oxygenContentMlPerDl(hb, saFraction, po2MmHg);
  const saNote = spo2Percent !== undefined ? 'SpO2 used for SaO2' : 'SaO2 from PaO2 (Severinghaus 1979)';
  const poNote = pao2 !== undefined ? 'arterial PaO2' : 'PaO2 from SpO2 (Ellis 1989)';
  return {
    kind: 'ok',
    value: {
      value: content,
      computation: {
        name: 'Arterial oxygen content',
        formula: OXYGEN_CONTENT_FORMULA,
        substituted:
          `${HUFNER_TEXT} × ${formatNumber(hb, 1)} × ${formatFraction(saFraction)} + ` +
          `${SOLUBILITY_TEXT} × ${formatNumber(po2MmHg, 1)} (${saNote}; ${poNote})`,
        result: `${formatNumber(content, 1)} mL/dL`,
        sourceKey: 'oxygen-content',
      },
    },
  };
}

/** Acid-base reading of the current gas (any specimen) against the policy limits. */
export function computeGasInterpretation(
  gas: BloodGas | undefined,
  policy: Policy,
): PhysiologyResults['gasInterpretation'] {
  if (gas === undefined) {
    return { kind: 'unknown', reason: 'no current blood gas', missing: ['blood gas'] };
  }
  // The values the gas has, by assignment: a missing value is left out (the reading names what is
  // missing), and a conditional spread per value would cost more than the reading itself.
  const values: { ph?: number; paco2MmHg?: number; hco3MmolPerL?: number } = {};
  if (gas.ph !== undefined) {
    values.ph = gas.ph;
  }
  if (gas.paco2MmHg !== undefined) {
    values.paco2MmHg = gas.paco2MmHg;
  }
  if (gas.hco3MmolPerL !== undefined) {
    values.hco3MmolPerL = gas.hco3MmolPerL;
  }
  return interpretBloodGas(
    values,
    {
      acidosisPhBelow: policy.thresholds.acidosisPhBelow,
      hypercapniaPaco2MmHg: policy.hypercapnicRisk.hypercapniaPaco2.mmHg,
      chronicBicarbonateAboveMmolPerL: policy.hypercapnicRisk.chronicBicarbonateAboveMmolPerL,
    },
  );
}
