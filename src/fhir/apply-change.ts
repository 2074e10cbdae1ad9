import type { DeviceKind, OrderChange, SaturationRange } from '../core/types.js';
import { CHANGE_NOTE_OPEN, changeNote, currentWords } from './change-note.js';
import { EXTENSION_URLS, isTargetExtensionUrl } from './codes.js';
import { copyJson } from './copy-json.js';
import type { FhirResource } from './gathered-data.js';
import { isObject } from './json.js';
import { parameterSays } from './order-parts.js';
import { readDeviceText } from './read-device-text.js';
import { readTargetWords } from './read-order.js';
import { findFio2Mentions, isOrderedSetting } from './read-setting-text.js';
import { readWrittenTarget } from './read-target-text.js';
import { deviceWords, formatNumber, formatPercent, rewriteDevice, rewriteFlow, rewriteTarget, type Rewrite } from './rewrite-text.js';
import { TextReadings } from './text-readings.js';
import { pruneEmpty, textSlots, type Json } from './text-slots.js';
import { firstObject, objects, ucumQuantity, writeDevice, writeFio2, writeFlow } from './write-order-fields.js';

/**
 * The suggestion's new draft: a deep copy of the order with the same resourceType and id, the change
 * written into the coded elements and into the exact words that stated the old value, so the order
 * never says two things (docs/fhir-input.md, "Writing a change"). Nothing else in the words changes.
 * Where a text also holds other values of the same kind (a contingency plan, an escalation flow), those
 * stay as written and a marked note says so ("[Advisory change: ...]"); the caller lists them in the
 * suggestion's label. Where the words cannot be safely rewritten (a target written with a condition or
 * two ranges; an order that says it has no SpO2 target or is for comfort), no changed resource is
 * offered and the plan says why. After the change the words alone state the new value, because a
 * client may keep only the text: a statement is appended to the main instruction when no words did.
 * A resource that is not one of the three order types comes back as an unchanged copy. Never throws.
 * Offers no changed resource when the order cannot be copied whole (e.g. nesting too deep to
 * serialise): an `update` replaces the whole resource, so a partial copy accepted by the user would
 * wipe the rest of the order. No suggestion is better. A change the words refuse is withheld before
 * any copy is tried, so an order that is both refused and too deep to copy is withheld with its reason.
 */

export type ChangePlan =
  | {
      readonly kind: 'changed';
      readonly resource: FhirResource;
      /** Values of the same kind the words also state, left as written and marked for review. */
      readonly leftAsWritten: readonly string[];
    }
  | { readonly kind: 'withheld'; readonly reason: string }
  | { readonly kind: 'cannot-copy' };

function clone(resource: FhirResource): Json | undefined {
  try {
    const copy = copyJson(resource);
    return isObject(copy) ? copy : undefined;
  } catch {
    return undefined;
  }
}

function writeTarget(resource: Json, range: SaturationRange): void {
  const isOurs = (e: unknown): boolean => isObject(e) && isTargetExtensionUrl(typeof e['url'] === 'string' ? e['url'] : undefined);
  for (const dosage of objects(resource, 'dosageInstruction')) {
    const inner = dosage['extension'];
    if (Array.isArray(inner)) dosage['extension'] = inner.filter((e) => !isOurs(e));
  }
  const outer = resource['extension'];
  const kept: unknown[] = Array.isArray(outer) ? (outer as unknown[]).filter((e) => !isOurs(e)) : [];
  const valueRange = { low: ucumQuantity(range.lowPercent, '%'), high: ucumQuantity(range.highPercent, '%') };
  resource['extension'] = [...kept, { url: EXTENSION_URLS.targetSaturation, valueRange }];
  for (const parameter of objects(resource, 'parameter')) {
    if (parameterSays(parameter['code']) === 'target' && isObject(parameter['valueRange'])) {
      parameter['valueRange'] = valueRange;
    }
  }
}

interface TextsRewrite {
  readonly stated: boolean;
  readonly leftAsWritten: readonly string[];
}

const CHANGE_NOTES = /\s*\[Advisory change:[^\]]*\]/g;

/** The slot's words as the reader reads them, and the change notes earlier suggestions added to it. */
function wordsAndNotes(text: string): { readonly words: string; readonly earlierNotes: string } {
  // Most texts carry no note: then both regexes would find nothing, and are not run.
  if (!text.includes(CHANGE_NOTE_OPEN)) {
    return { words: text, earlierNotes: '' };
  }
  return { words: currentWords(text), earlierNotes: text.match(CHANGE_NOTES)?.join('') ?? '' };
}

/**
 * Rewrites every text slot: the words before any earlier change note are rewritten, earlier notes are
 * kept, and a new note is added where the words hold other values of the kind that were left alone.
 * A coding whose display stated the old value is dropped (its code still means the old value), its
 * new words kept in the concept's text.
 */
function rewriteTexts(resource: Json, rewrite: (text: string) => Rewrite, change: OrderChange): TextsRewrite {
  let stated = false;
  const left: string[] = [];
  for (const slot of textSlots(resource)) {
    const { words, earlierNotes } = wordsAndNotes(slot.text);
    const result = rewrite(words);
    stated ||= result.stated;
    const note = result.stated && result.leftAsWritten.length > 0 ? ` ${changeNote(changedWhat(change), result.leftAsWritten)}` : '';
    left.push(...(result.stated ? result.leftAsWritten : []));
    const text = `${result.text}${earlierNotes}${note}`;
    if (slot.concept === undefined) {
      slot.holder[slot.key] = text;
    } else if (text !== slot.text) {
      const codings = slot.concept['coding'];
      if (Array.isArray(codings)) slot.concept['coding'] = codings.filter((c) => c !== slot.holder);
      if (typeof slot.concept['text'] !== 'string') slot.concept['text'] = text;
    }
  }
  return { stated, leftAsWritten: [...new Set(left)] };
}

/** The words of every text slot, as the reader reads them. */
function currentTexts(resource: Json): string[] {
  return textSlots(resource).map((s) => wordsAndNotes(s.text).words);
}

/** The first value `read` finds in the texts, reading no further than that text. */
function firstRead<T>(texts: readonly string[], read: (text: string) => T | undefined): T | undefined {
  for (const text of texts) {
    const value = read(text);
    if (value !== undefined) return value;
  }
  return undefined;
}

/** The ordered flow, as readSettingText reads it, without the FiO2 and target readings it also makes. */
function firstFlow(texts: readonly string[], readings: TextReadings): number | undefined {
  return firstRead(texts, (t) => readings.flows(t).ordered?.flowLPerMin);
}

/** The set FiO2, as readSettingText reads it for `device`, without its flow reading. */
function setFio2(text: string, device: DeviceKind, readings: TextReadings): number | undefined {
  return findFio2Mentions(text, device, readings.targetStatements(text)).find((m) => isOrderedSetting(text, m))?.fraction;
}

/** Whether the words alone, read as the reader reads them, state the new value. */
function wordsState(resource: Json, change: OrderChange, readings: TextReadings): boolean {
  const texts = currentTexts(resource);
  switch (change.kind) {
    case 'set-target': {
      const written = readWrittenTarget(texts, texts.map((t) => readings.targetStatements(t)));
      return (
        written.note === undefined &&
        written.range?.lowPercent === change.range.lowPercent &&
        written.range.highPercent === change.range.highPercent
      );
    }
    case 'set-flow':
      return firstFlow(texts, readings) === change.flowLPerMin;
    case 'set-device':
      // Each reading stops at the first text that states it, and the next is read only if this agrees.
      return (
        firstRead(texts, (t) => readDeviceText(t)?.device) === change.device &&
        firstFlow(texts, readings) === change.flowLPerMin &&
        firstRead(texts, (t) => setFio2(t, change.device, readings)) === change.setFio2Fraction
      );
    case 'stop-oxygen':
      // The status ends the order; the words still give the old setting, so a sentence says it stopped.
      return false;
  }
}

/** The sentence that states the change on its own, for an order whose words did not state it. */
function statement(change: OrderChange): string {
  switch (change.kind) {
    case 'set-target':
      return `Target SpO2 ${change.range.lowPercent}-${change.range.highPercent}%.`;
    case 'set-flow':
      return `Oxygen flow ${formatNumber(change.flowLPerMin)} L/min.`;
    case 'set-device': {
      const fio2 = change.setFio2Fraction;
      const setting = fio2 === undefined || change.device === 'venturi-mask' ? '' : `, FiO2 ${formatPercent(fio2)}%`;
      return `Oxygen by ${deviceWords(change.device, fio2)} at ${formatNumber(change.flowLPerMin)} L/min${setting}.`;
    }
    case 'stop-oxygen':
      return 'Oxygen stopped: check SpO2 on air.';
  }
}

/** What the change note says changed: "target now 88-92%". */
function changedWhat(change: OrderChange): string {
  return `${statement(change).replace(/\.$/, '').replace(/^Oxygen flow/, 'flow now').replace(/^Target SpO2/, 'target now').replace(/^Oxygen by/, 'device now')}`;
}

/**
 * Why the words cannot take the change safely, or undefined. Only a new target is refused: a target
 * is not added to an order that says it has none or is for comfort (BTS 2017: in terminal palliative
 * care oxygen is for comfort) or that stops oxygen, nor written over a target stated with a condition
 * or two ranges.
 */
function refusal(resource: FhirResource, change: OrderChange): string | undefined {
  const type = resource.resourceType;
  if (change.kind !== 'set-target' || (type !== 'MedicationRequest' && type !== 'ServiceRequest' && type !== 'DeviceRequest')) {
    return undefined;
  }
  const { targetNote: note, stopOrComfort } = readTargetWords(resource, type);
  if (note?.kind === 'no-target' || stopOrComfort === 'comfort') {
    const said = note === undefined ? '' : ` ("${note.text}")`;
    return `the order says it has no SpO2 target or is for comfort${said}; adding a target is the prescriber's decision, so no one-click change is offered.`;
  }
  if (stopOrComfort === 'stop') {
    return 'the order stops oxygen; a target is not added to it by a one-click change.';
  }
  if (note?.kind === 'ambiguous') {
    return `the order's target is written as "${note.text}", with two ranges or a condition; which range is meant is the prescriber's to say, so the words are not rewritten by a one-click change.`;
  }
  return undefined;
}

/** The main instruction: dosageInstruction[0].text; else patientInstruction; else the first note. */
function appendToMainText(resource: Json, sentence: string): void {
  const type = resource['resourceType'];
  let holder: Json;
  let key = 'text';
  if (type === 'MedicationRequest') {
    holder = firstObject(resource, 'dosageInstruction');
  } else if (type === 'ServiceRequest' && typeof resource['patientInstruction'] === 'string') {
    holder = resource;
    key = 'patientInstruction';
  } else {
    const withText = objects(resource, 'note').find((n) => typeof n['text'] === 'string');
    holder = withText ?? firstObject(resource, 'note');
  }
  const current = holder[key];
  const base = typeof current === 'string' ? current.trim() : '';
  const joiner = /[.!?;]$/.test(base) ? ' ' : '. ';
  holder[key] = base === '' ? sentence : `${base}${joiner}${sentence}`;
}

export interface PlanOptions {
  /**
   * The readings of order words shared by the plans of one call (build-card.ts), as a later suggestion
   * plans its change on the words an earlier one wrote; a plan without it reads for itself.
   */
  readonly readings?: TextReadings;
}

/** Plans the change: the changed copy with the values left as written, or why there is none. */
export function planOrderChange(resource: FhirResource, change: OrderChange, options: PlanOptions = {}): ChangePlan {
  // Whether the words refuse the change is read from the order itself, before anything is copied:
  // a withheld change needs no copy.
  const refused = refusal(resource, change);
  if (refused !== undefined) {
    return { kind: 'withheld', reason: refused };
  }
  const copy = clone(resource);
  if (copy === undefined) {
    return { kind: 'cannot-copy' };
  }
  const type = copy['resourceType'];
  if (type !== 'MedicationRequest' && type !== 'ServiceRequest' && type !== 'DeviceRequest') {
    return { kind: 'changed', resource: copy as FhirResource, leftAsWritten: [] };
  }
  const readings = options.readings ?? new TextReadings();
  let rewritten: TextsRewrite;
  switch (change.kind) {
    case 'set-target':
      writeTarget(copy, change.range);
      rewritten = rewriteTexts(copy, (t) => rewriteTarget(t, change.range, readings.targetStatements(t)), change);
      break;
    case 'set-flow':
      writeFlow(copy, change.flowLPerMin);
      rewritten = rewriteTexts(copy, (t) => rewriteFlow(t, change.flowLPerMin, readings.flows(t)), change);
      break;
    case 'set-device':
      rewritten = rewriteTexts(copy, (t) => rewriteDevice(t, change, readings.targetStatements(t), readings.flows(t)), change);
      writeDevice(copy, change.device, change.setFio2Fraction);
      writeFlow(copy, change.flowLPerMin);
      writeFio2(copy, change.setFio2Fraction);
      break;
    case 'stop-oxygen':
      // FHIR R4 request status (from memory): a MedicationRequest halted early is `stopped`; a
      // ServiceRequest or DeviceRequest whose therapy has done its work is `completed`.
      copy['status'] = type === 'MedicationRequest' ? 'stopped' : 'completed';
      rewritten = { stated: false, leftAsWritten: [] };
      break;
  }
  if (!wordsState(copy, change, readings)) {
    appendToMainText(copy, statement(change));
  }
  pruneEmpty(copy);
  return { kind: 'changed', resource: copy as FhirResource, leftAsWritten: rewritten.leftAsWritten };
}

/** The changed copy, or undefined when the change is withheld or the order cannot be copied whole. */
export function applyOrderChange(resource: FhirResource, change: OrderChange): FhirResource | undefined {
  const plan = planOrderChange(resource, change);
  return plan.kind === 'changed' ? plan.resource : undefined;
}
