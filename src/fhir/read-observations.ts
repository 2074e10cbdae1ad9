import type { Policy } from '../core/policy.js';
import type { BloodGas, Measured, SetAsideNote, TrendReadings } from '../core/types.js';
import type { MeasuredKind, ObservationCode } from './codes.js';
import { describeAge } from './fhir-date.js';
import type { FhirResource } from './gathered-data.js';
import { arrayAt, stringAt } from './json.js';
import { checkGasConsistency } from './gas-consistency.js';
import { FUTURE_SKEW_MS } from './plausibility.js';
import { groupBloodGases } from './read-blood-gases.js';
import { readObservationValues, type Reading } from './read-observation-values.js';

/**
 * Reads the patient's Observations into current values (within the policy's freshness windows, most
 * recent first), older blood gases kept as history, and notes for what was set aside. A stale kind
 * gets one note, and only when nothing current of that kind is left ("Latest SpO2 is 9 h old").
 * SpO2, FiO2 and flow are also kept, apart, over the trend window when that is the longer one, so a
 * trend over hours can be seen without an old reading ever counting as current.
 */

export interface ObservationFacts {
  readonly spo2Percent: readonly Measured[];
  readonly fio2Fraction: readonly Measured[];
  readonly o2FlowLPerMin: readonly Measured[];
  readonly respRatePerMin: readonly Measured[];
  readonly haemoglobinGPerDL: readonly Measured[];
  /** SpO2, FiO2 and flow within the longer of the vital-signs and trend windows, for trends only. */
  readonly trendReadings: TrendReadings;
  readonly bloodGases: readonly BloodGas[];
  readonly historicBloodGases: readonly BloodGas[];
  /** The newest plausible BMI, whatever its age (no policy window applies). */
  readonly bmiKgPerM2: number | undefined;
  readonly notes: readonly SetAsideNote[];
}

const LABEL: Readonly<Record<MeasuredKind, string>> = {
  spo2: 'SpO2',
  fio2: 'FiO2',
  'o2-flow': 'Oxygen flow',
  'resp-rate': 'Respiratory rate',
  haemoglobin: 'Haemoglobin',
  bmi: 'BMI',
};

/** Observation references listed in a panel's `hasMember`, mapped to the panel. */
function panelMembership(observations: readonly FhirResource[]): Map<string, string> {
  const panelOf = new Map<string, string>();
  for (const [i, obs] of observations.entries()) {
    const panel = obs.id ?? `#${i}`;
    for (const member of arrayAt(obs, 'hasMember')) {
      const ref = stringAt(member, 'reference');
      const tail = ref?.split('/').slice(-2).join('/');
      if (tail?.startsWith('Observation/') === true) {
        panelOf.set(tail, panel);
      }
    }
  }
  return panelOf;
}

function futureNote(what: string, ageMs: number, reference: string | undefined): SetAsideNote {
  return { what, reason: 'implausible', detail: `Dated ${describeAge(-ageMs)} in the future.`, reference };
}

function staleNote(
  what: string,
  ageMs: number,
  windowMinutes: number,
  reference: string | undefined,
  more = '',
): SetAsideNote {
  const named = what === 'Blood gas' ? 'blood gas' : what;
  const window = describeAge(windowMinutes * 60_000);
  const detail = `Latest ${named} is ${describeAge(ageMs)} old (current within ${window})${more}.`;
  return { what, reason: 'stale', detail, reference };
}

/** Later effective time first. */
function newestFirst(a: Reading, b: Reading): number {
  return b.atMs - a.atMs;
}

/** The readings of each kind, in the order read. */
function byKind(readings: readonly Reading[]): Map<ObservationCode['kind'], Reading[]> {
  const groups = new Map<ObservationCode['kind'], Reading[]>();
  for (const r of readings) {
    const group = groups.get(r.code.kind);
    if (group === undefined) {
      groups.set(r.code.kind, [r]);
    } else {
      group.push(r);
    }
  }
  return groups;
}

/** A reading as the facts carry it. */
function measuredOf(r: Reading): Measured {
  return { value: r.value, at: r.at, atMs: Date.parse(r.at), reported: r.reported, reference: r.reference };
}

/**
 * The current readings of one kind, given newest first; a stale or future one gets a note. `trend`,
 * when given, is trendOf of the same readings over a window at least as long: newest first, its
 * first readings are the current ones, so they are listed from it rather than made (and their times
 * parsed) again.
 */
function currentOf(
  newest: readonly Reading[],
  kind: MeasuredKind,
  windowMinutes: number,
  nowMs: number,
  notes: SetAsideNote[],
  trend: readonly Measured[] = [],
): Measured[] {
  const current: Measured[] = [];
  let newestStale: Reading | undefined;
  for (const r of newest) {
    const ageMs = nowMs - r.atMs;
    if (ageMs < -FUTURE_SKEW_MS) {
      notes.push(futureNote(LABEL[kind], ageMs, r.reference));
    } else if (ageMs > windowMinutes * 60_000) {
      newestStale ??= r;
    } else {
      current.push(trend[current.length] ?? measuredOf(r));
    }
  }
  if (current.length === 0 && newestStale !== undefined) {
    notes.push(staleNote(LABEL[kind], nowMs - newestStale.atMs, windowMinutes, newestStale.reference));
  }
  return current;
}

/** Readings, given newest first, no older than `windowMinutes` and not in the future. */
function trendOf(newest: readonly Reading[], windowMinutes: number, nowMs: number): Measured[] {
  return newest.filter((r) => nowMs - r.atMs >= -FUTURE_SKEW_MS && nowMs - r.atMs <= windowMinutes * 60_000).map(measuredOf);
}

/**
 * @param trendMinutes - the trend window (`thresholds.oxygenNeedTrendMinutes`); trend readings are
 *   kept over the longer of it and `freshness.vitalSignsMinutes`.
 */
export function readObservations(
  observations: readonly FhirResource[],
  freshness: Policy['freshness'],
  trendMinutes: number,
  now: Date,
): ObservationFacts {
  const nowMs = now.getTime();
  const notes: SetAsideNote[] = [];
  const panelOf = panelMembership(observations);
  const readings: Reading[] = [];
  for (const obs of observations) {
    readings.push(...readObservationValues(obs, panelOf, notes));
  }
  // Each kind is picked out once, and sorted (in place, in its own list) once for both its current and
  // its trend readings. Gas readings are not sorted here: they are grouped in the order read.
  const kinds = byKind(readings);
  const newest = (kind: MeasuredKind): Reading[] => (kinds.get(kind) ?? []).sort(newestFirst);
  const [spo2, fio2, flow] = [newest('spo2'), newest('fio2'), newest('o2-flow')];

  const vitals = freshness.vitalSignsMinutes;
  const trendWindow = Math.max(vitals, trendMinutes);
  const bmi = newest('bmi').find((r) => r.atMs - nowMs <= FUTURE_SKEW_MS);

  const bloodGases: BloodGas[] = [];
  const historicBloodGases: BloodGas[] = [];
  let newestOld: { ageMs: number; reference: string | undefined } | undefined;
  // A gas value dated in the future is set aside before grouping: tied to a sample by its specimen or
  // caught by the window, it would otherwise be used under the sample's earlier collection time.
  const gasReadings: Reading[] = [];
  for (const r of kinds.get('gas') ?? []) {
    if (r.atMs - nowMs > FUTURE_SKEW_MS) {
      notes.push(futureNote(r.code.label, nowMs - r.atMs, r.reference));
    } else {
      gasReadings.push(r);
    }
  }
  for (const sample of groupBloodGases(gasReadings, freshness.bloodGasGroupingMinutes)) {
    const ageMs = nowMs - sample.atMs;
    const kept = ageMs <= freshness.previousHypercapniaDays * 86_400_000;
    // A sample whose pH, PCO2 and HCO3 disagree has mislabelled pressures: they are set aside.
    const checked = ageMs >= -FUTURE_SKEW_MS && kept ? checkGasConsistency(sample.gas, sample.reference) : undefined;
    if (checked?.note !== undefined) {
      notes.push(checked.note);
    }
    const gas = checked?.gas ?? sample.gas;
    if (ageMs < -FUTURE_SKEW_MS) {
      notes.push(futureNote('Blood gas', ageMs, sample.reference));
    } else if (ageMs <= freshness.bloodGasMinutes * 60_000) {
      bloodGases.push(gas);
    } else {
      newestOld ??= { ageMs, reference: sample.reference };
      if (kept) {
        historicBloodGases.push(gas);
      }
    }
  }
  if (bloodGases.length === 0 && newestOld !== undefined) {
    const kept =
      historicBloodGases.length > 0 ? '; older gases are kept only to show previous hypercapnia' : '';
    notes.push(staleNote('Blood gas', newestOld.ageMs, freshness.bloodGasMinutes, newestOld.reference, kept));
  }

  const trendReadings = {
    spo2Percent: trendOf(spo2, trendWindow, nowMs),
    fio2Fraction: trendOf(fio2, trendWindow, nowMs),
    o2FlowLPerMin: trendOf(flow, trendWindow, nowMs),
  };
  return {
    spo2Percent: currentOf(spo2, 'spo2', vitals, nowMs, notes, trendReadings.spo2Percent),
    fio2Fraction: currentOf(fio2, 'fio2', vitals, nowMs, notes, trendReadings.fio2Fraction),
    o2FlowLPerMin: currentOf(flow, 'o2-flow', vitals, nowMs, notes, trendReadings.o2FlowLPerMin),
    respRatePerMin: currentOf(newest('resp-rate'), 'resp-rate', vitals, nowMs, notes),
    haemoglobinGPerDL: currentOf(newest('haemoglobin'), 'haemoglobin', freshness.haemoglobinHours * 60, nowMs, notes),
    trendReadings,
    bloodGases,
    historicBloodGases,
    bmiKgPerM2: bmi?.value,
    notes,
  };
}
