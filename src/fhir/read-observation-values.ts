import type { SetAsideNote } from '../core/types.js';
import {
  LOINC_OBSERVATIONS,
  SYSTEMS,
  type GasField,
  type MeasuredKind,
  type ObservationCode,
} from './codes.js';
import { parseFhirDateTime, withUtcIfZoneless } from './fhir-date.js';
import type { FhirResource } from './gathered-data.js';
import { codingsOf, isObject, objectAt, objectsAt, quantityOf, stringAt, type JsonObject } from './json.js';
import { PLAUSIBLE, describeRange, isPlausible, type PlausibleRange } from './plausibility.js';
import { readQuantity, type TargetUnit } from './read-quantity.js';

/**
 * Reads the values in Observations (and in their components, as in the US Core pulse-oximetry
 * profile, which carries O2 flow and concentration as components) into plain readings in the units
 * our field names promise. Freshness and grouping are the caller's job.
 */

export interface Reading {
  readonly code: ObservationCode;
  readonly value: number;
  readonly reported: { readonly value: number; readonly unit: string };
  /** Effective time as the source wrote it, and as epoch milliseconds. */
  readonly at: string;
  readonly atMs: number;
  readonly reference: string | undefined;
  /**
   * Keys that tie this value to others of the same sample: `panel:<id>` for a panel listing it in
   * `hasMember`, `specimen:<reference>` for its `Observation.specimen`. Empty when nothing ties it.
   */
  readonly sampleKeys: readonly string[];
  /** When the result was filed (`issued`), else its effective time: a later filing corrects an earlier one. */
  readonly filedMs: number;
  /** Status 'corrected' or 'amended': wins over another value of the same sample filed at the same time. */
  readonly corrected: boolean;
}

const USED_STATUSES = new Set(['preliminary', 'final', 'amended', 'corrected']);
const ERROR_STATUSES = new Set(['entered-in-error', 'cancelled']);

const UNIT_OF: Readonly<Record<MeasuredKind, TargetUnit>> = {
  spo2: 'percent',
  fio2: 'fraction',
  'o2-flow': 'L/min',
  'resp-rate': '/min',
  haemoglobin: 'g/dL',
  bmi: 'kg/m2',
};
const GAS_UNIT_OF: Readonly<Record<GasField, TargetUnit>> = {
  ph: 'pH',
  po2: 'mm[Hg]',
  pco2: 'mm[Hg]',
  hco3: 'mmol/L',
  baseExcess: 'mmol/L',
};
const LIMITS_OF: Readonly<Record<MeasuredKind, PlausibleRange>> = {
  spo2: PLAUSIBLE.spo2Percent,
  fio2: PLAUSIBLE.fio2Fraction,
  'o2-flow': PLAUSIBLE.o2FlowLPerMin,
  'resp-rate': PLAUSIBLE.respRatePerMin,
  haemoglobin: PLAUSIBLE.haemoglobinGPerDL,
  bmi: PLAUSIBLE.bmiKgPerM2,
};
const GAS_LIMITS_OF: Readonly<Record<GasField, PlausibleRange>> = {
  ph: PLAUSIBLE.ph,
  po2: PLAUSIBLE.po2MmHg,
  pco2: PLAUSIBLE.pco2MmHg,
  hco3: PLAUSIBLE.hco3MmolPerL,
  baseExcess: PLAUSIBLE.baseExcessMmolPerL,
};

/** The recognised LOINC code of a CodeableConcept, if any (a code needs its system to count). */
export function observationCodeOf(concept: unknown): ObservationCode | undefined {
  for (const coding of codingsOf(concept)) {
    const code = coding.code?.trim();
    if (coding.system === SYSTEMS.loinc && code !== undefined) {
      const known = LOINC_OBSERVATIONS[code];
      if (known !== undefined) {
        return known;
      }
    }
  }
  return undefined;
}

function effectiveTime(obs: FhirResource): string | undefined {
  const period = objectAt(obs, 'effectivePeriod');
  return (
    stringAt(obs, 'effectiveDateTime') ??
    stringAt(obs, 'effectiveInstant') ??
    stringAt(period, 'end') ??
    stringAt(period, 'start') ??
    stringAt(obs, 'issued')
  );
}

interface Context {
  readonly at: string;
  readonly atMs: number;
  readonly reference: string | undefined;
  readonly sampleKeys: readonly string[];
  readonly filedMs: number;
  readonly corrected: boolean;
}

/** Whether the holder states a result: any `value[x]` element. */
function hasValueElement(holder: Readonly<Record<string, unknown>>): boolean {
  if (Object.hasOwn(holder, 'valueQuantity')) {
    return true; // the value[x] nearly every result this service reads has, found without a walk over every key
  }
  for (const key in holder) {
    if (Object.hasOwn(holder, key) && key.startsWith('value')) {
      return true;
    }
  }
  return false;
}

/**
 * Sets a value aside with its reason. A module function rather than a closure per value: the
 * readers run once per Observation, hundreds of times on a long stay.
 */
function setAside(
  notes: SetAsideNote[],
  what: string,
  reason: SetAsideNote['reason'],
  detail: string,
  reference: string | undefined,
): undefined {
  notes.push({ what, reason, detail, reference });
  return undefined;
}

function readValue(
  code: ObservationCode,
  holder: unknown,
  ctx: Context,
  notes: SetAsideNote[],
): Reading | undefined {
  if (!isObject(holder) || !hasValueElement(holder)) {
    return undefined; // no result (dataAbsentReason, or a panel whose values are its members)
  }
  const quantity = quantityOf(objectAt(holder, 'valueQuantity'));
  if (quantity === undefined) {
    return setAside(notes, code.label, 'unrecognised', 'The value is not a number with a unit (valueQuantity).', ctx.reference);
  }
  const read = readQuantity(quantity, code.kind === 'gas' ? GAS_UNIT_OF[code.field] : UNIT_OF[code.kind]);
  if (read.kind !== 'ok') {
    const detail = `${quantity.value} '${read.unit}' is not a unit this value can be read in.`;
    return setAside(notes, code.label, 'unreadable-unit', detail, ctx.reference);
  }
  const limits = code.kind === 'gas' ? GAS_LIMITS_OF[code.field] : LIMITS_OF[code.kind];
  if (!isPlausible(read.value, limits)) {
    const shown = `${read.reported.value}${read.reported.unit === '' ? '' : ` ${read.reported.unit}`}`;
    return setAside(notes, code.label, 'implausible', `${shown} is outside the plausible range ${describeRange(limits)}.`, ctx.reference);
  }
  return {
    code,
    value: read.value,
    reported: read.reported,
    at: ctx.at,
    atMs: ctx.atMs,
    reference: ctx.reference,
    sampleKeys: ctx.sampleKeys,
    filedMs: ctx.filedMs,
    corrected: ctx.corrected,
  };
}

/**
 * The readings in one Observation. `panelOf` maps an Observation reference to the panel that lists
 * it in `hasMember`, so a gas sample sent as separate Observations stays together.
 */
export function readObservationValues(
  obs: FhirResource,
  panelOf: ReadonlyMap<string, string>,
  notes: SetAsideNote[],
): readonly Reading[] {
  if (obs.resourceType !== 'Observation') {
    return [];
  }
  const reference = obs.id === undefined ? undefined : `Observation/${obs.id}`;
  const top = observationCodeOf(obs['code']);
  const components: { readonly code: ObservationCode; readonly holder: JsonObject }[] = [];
  for (const holder of objectsAt(obs, 'component')) {
    const code = observationCodeOf(holder['code']);
    if (code !== undefined) {
      components.push({ code, holder });
    }
  }
  const first = top ?? components[0]?.code;
  if (first === undefined) {
    return []; // not an observation this service reads
  }
  const status = stringAt(obs, 'status')?.toLowerCase();
  if (status !== undefined && ERROR_STATUSES.has(status)) {
    setAside(notes, first.label, 'error-in-source', `The result has status '${status}' and was not used.`, reference);
    return [];
  }
  if (status === undefined || !USED_STATUSES.has(status)) {
    const detail = `The result status '${status ?? '(none)'}' is not preliminary, final, amended or corrected.`;
    setAside(notes, first.label, 'unrecognised', detail, reference);
    return [];
  }
  const at = withUtcIfZoneless(effectiveTime(obs));
  const parsed = parseFhirDateTime(at);
  if (at === undefined || parsed === undefined) {
    setAside(notes, first.label, 'unrecognised', 'The result has no readable effective time, so its age is unknown.', reference);
    return [];
  }
  const specimen = stringAt(objectAt(obs, 'specimen'), 'reference')?.trim();
  // Most requests list no panel, and looking a reference up hashes it first.
  const panel = reference === undefined || panelOf.size === 0 ? undefined : panelOf.get(reference);
  const sampleKeys: string[] = [];
  if (panel !== undefined) {
    sampleKeys.push(`panel:${panel}`);
  }
  if (specimen !== undefined && specimen !== '') {
    sampleKeys.push(`specimen:${specimen}`);
  }
  const filedMs = parseFhirDateTime(stringAt(obs, 'issued'))?.startMs ?? parsed.startMs;
  const corrected = status === 'corrected' || status === 'amended';
  const ctx: Context = { at, atMs: parsed.startMs, reference, sampleKeys, filedMs, corrected };
  const readings: Reading[] = [];
  if (top !== undefined) {
    const r = readValue(top, obs, ctx, notes);
    if (r !== undefined) readings.push(r);
  }
  for (const c of components) {
    const r = readValue(c.code, c.holder, ctx, notes);
    if (r !== undefined) readings.push(r);
  }
  return readings;
}
