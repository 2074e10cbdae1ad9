import type {
  DeviceKind,
  OrderPurpose,
  OrderTarget,
  OxygenOrder,
  ReadFrom,
  SaturationRange,
  SetAsideNote,
  TargetNote,
} from '../core/types.js';
import { currentWords } from './change-note.js';
import { withUtcIfZoneless } from './fhir-date.js';
import type { FhirResource } from './gathered-data.js';
import type { OrderResourceType } from './is-oxygen-order.js';
import { objectAt, quantityOf, stringAt, unitOf } from './json.js';
import { orderParts, type FoundQuantity, type OrderParts } from './order-parts.js';
import { PLAUSIBLE, describeRange, isPlausible } from './plausibility.js';
import { readDeviceText } from './read-device-text.js';
import { readRangeAsTarget, readTargetExtension } from './read-order-target.js';
import { readQuantity } from './read-quantity.js';
import { readSettingText, type SettingTextRead } from './read-setting-text.js';
import { readOrderPurpose, type PurposeInputs } from './read-order-purpose.js';
import { findTargetStatements, rangeKeepsBound, readWrittenTarget, type TargetStatements } from './read-target-text.js';
import { convertUnit, normaliseUnit } from '../units/convert.js';

/**
 * Reads one oxygen order into an OxygenOrder: coded elements first, then the order's words. Where
 * the two disagree the coded value is used and a note says so, because a clinician may have edited
 * only one of them.
 */

export interface OrderRead {
  readonly order: OxygenOrder;
  readonly notes: readonly SetAsideNote[];
}

interface Settings {
  flow: number | undefined;
  fio2: number | undefined;
}

/** Collects the notes of one order, each carrying the order's reference. */
class OrderNotes {
  readonly list: SetAsideNote[] = [];
  constructor(private readonly reference: string) {}

  add(reason: SetAsideNote['reason'], what: string, detail: string): void {
    this.list.push({ what, reason, detail, reference: this.reference });
  }

  disagree(what: string, coded: string, written: string): void {
    const detail = `The order text says ${written} but the coded value is ${coded}; the coded value was used.`;
    this.add('error-in-source', what, detail);
  }

  plausibleFlow(value: number): number | undefined {
    if (isPlausible(value, PLAUSIBLE.o2FlowLPerMin)) {
      return value;
    }
    const limits = describeRange(PLAUSIBLE.o2FlowLPerMin);
    this.add('implausible', 'Ordered oxygen flow', `${value} L/min is outside ${limits}.`);
    return undefined;
  }

  plausibleFio2(value: number): number | undefined {
    if (isPlausible(value, PLAUSIBLE.fio2Fraction)) {
      return value;
    }
    this.add('implausible', 'Ordered FiO2', `${value} is outside ${describeRange(PLAUSIBLE.fio2Fraction)}.`);
    return undefined;
  }
}

/**
 * A count ("1 {pill}", "2 {puff}": a UCUM annotation alone) or a mass ("5 mg") cannot be a flow or an
 * FiO2 written oddly, so such a quantity is not an order field this service reads. A volume ("2 L"),
 * a blank or an unknown unit may be a flow with a slip in it, so those are still noted.
 */
function isCountOrMass(unit: string | undefined): boolean {
  return unit !== undefined && (/^\{[^{}]*\}$/.test(unit) || convertUnit(1, unit, 'g').kind === 'ok');
}

function readStructuredSettings(found: readonly FoundQuantity[], notes: OrderNotes): Settings {
  const settings: Settings = { flow: undefined, fio2: undefined };
  for (const item of found) {
    const quantity = quantityOf(item.value);
    if (quantity === undefined) {
      continue;
    }
    const flow = item.says === 'fio2' ? undefined : readQuantity(quantity, 'L/min');
    if (flow?.kind === 'ok') {
      settings.flow ??= notes.plausibleFlow(flow.value);
      continue;
    }
    if (item.says === 'flow-only') {
      continue; // a device parameter we do not know (humidity, temperature...) is not ours to read
    }
    const written = unitOf(quantity);
    const unit = normaliseUnit(written);
    const isShareUnit = written !== '' && (unit === '%' || unit === '1');
    const maybeFio2 = item.says === 'fio2' || (item.says === 'either' && isShareUnit);
    const fio2 = maybeFio2 ? readQuantity(quantity, 'fraction') : undefined;
    if (fio2?.kind === 'ok') {
      settings.fio2 ??= notes.plausibleFio2(fio2.value);
      continue;
    }
    if (isCountOrMass(unit)) {
      continue; // e.g. a client that adds "1 {pill}" to every order: not an oxygen setting, nothing set aside
    }
    const shown = `${quantity.value} ${written === '' ? '(no unit)' : written}`;
    const detail = `${shown} at ${item.where} is neither a flow nor an oxygen concentration.`;
    notes.add('unreadable-unit', 'Order quantity', detail);
  }
  return settings;
}

/** "via <word>": where an order names its device, read or not ("O2 via wall outlet" is not a device). */
const DEVICE_SLOT = /\bvia\s+([A-Za-z][\w/-]*(?:\s+mask)?)/i;

interface DeviceRead {
  readonly device: DeviceKind | undefined;
  readonly text: string | undefined;
}

function readDevice(parts: OrderParts, notes: OrderNotes): DeviceRead {
  const reads = [...parts.deviceWords, ...parts.texts].map(readDeviceText).filter((r) => r !== undefined);
  const first = reads[0];
  const chosen = parts.deviceFromCode ?? (first && { device: first.device, text: first.deviceText });
  if (chosen === undefined) {
    const named = parts.texts.map((t) => DEVICE_SLOT.exec(t)?.[1]).find((w) => w !== undefined);
    if (named !== undefined) {
      // Checks that need the device are skipped; say so, so that no card never reads as approval.
      const detail = `The order names a device ('${named}') that this service does not recognise, so the checks that need the device (flow range, device choice) were not run.`;
      notes.add('unrecognised', 'Ordered device', detail);
    }
    return { device: undefined, text: parts.deviceName };
  }
  const named = new Set<DeviceKind>();
  for (const r of reads) {
    named.add(r.device);
    for (const d of r.alsoNamed) named.add(d);
  }
  const others = [...named].filter((d) => d !== chosen.device);
  if (others.length > 0) {
    const detail = `The order also names ${others.join(', ')}; it was read as ${chosen.device} ('${chosen.text}').`;
    notes.add('unrecognised', 'Ordered device', detail);
  }
  return { device: chosen.device, text: chosen.text };
}

/**
 * The range as the order's target. Written out rather than spread (`{ ...range, readFrom }`): on
 * Node 20 (measured on 20.20) a spread followed by a key the source lacks costs about a microsecond.
 */
function targetOf(range: SaturationRange, readFrom: ReadFrom): OrderTarget {
  return { lowPercent: range.lowPercent, highPercent: range.highPercent, readFrom };
}

interface TargetRead {
  readonly target: OrderTarget | undefined;
  readonly note: TargetNote | undefined;
}

function readTarget(
  parts: OrderParts,
  texts: readonly string[],
  statements: readonly TargetStatements[],
  reference: string,
  notes: OrderNotes,
): TargetRead {
  let structured = readTargetExtension(parts.targetHolders, reference);
  for (const range of parts.targetRanges) {
    if (structured.range !== undefined) break;
    structured = readRangeAsTarget(range, 'Target SpO2 parameter', reference);
  }
  notes.list.push(...structured.notes);
  const written = readWrittenTarget(texts, statements);
  if (structured.range === undefined) {
    return { target: written.range === undefined ? undefined : targetOf(written.range, 'text'), note: written.note };
  }
  const { lowPercent: low, highPercent: high } = structured.range;
  const target = targetOf(structured.range, 'structured');
  const note = written.note;
  if (note?.kind === 'one-sided') {
    // A coded range with a bound in the words that it keeps is one target; one it breaks is two.
    return rangeKeepsBound(structured.range, note.bound, note.percent)
      ? { target, note: undefined }
      : { target, note: { kind: 'ambiguous', ranges: [structured.range], text: note.text } };
  }
  if (note?.kind === 'single-value') {
    // A coded range holding the value written is one target; one that does not is two.
    return note.percent >= low && note.percent <= high
      ? { target, note: undefined }
      : { target, note: { kind: 'ambiguous', ranges: [structured.range], text: note.text } };
  }
  if (note?.kind === 'no-target') {
    return { target, note: { kind: 'ambiguous', ranges: [structured.range], text: note.text } };
  }
  if (note === undefined && written.range !== undefined && (written.range.lowPercent !== low || written.range.highPercent !== high)) {
    const shown = `${written.range.lowPercent}–${written.range.highPercent} %`;
    notes.disagree('Ordered target SpO2', `${low}–${high} %`, shown);
  }
  return { target, note };
}

function readFlow(
  parts: OrderParts,
  coded: number | undefined,
  written: readonly SettingTextRead[],
  notes: OrderNotes,
): number | undefined {
  const writtenFlow = written.find((w) => w.flowLPerMin !== undefined || w.flowRange !== undefined);
  let flow = coded;
  if (flow === undefined && writtenFlow?.flowLPerMin !== undefined) {
    flow = notes.plausibleFlow(writtenFlow.flowLPerMin);
  } else if (flow !== undefined && writtenFlow?.flowLPerMin !== undefined && writtenFlow.flowLPerMin !== flow) {
    notes.disagree('Ordered oxygen flow', `${flow} L/min`, `${writtenFlow.flowLPerMin} L/min`);
  }
  const codedRange = parts.flowRanges[0];
  const valueAt = (key: string): number | undefined => quantityOf(objectAt(codedRange, key))?.value;
  const range = codedRange === undefined ? writtenFlow?.flowRange : { low: valueAt('low'), high: valueAt('high') };
  if (flow === undefined && range !== undefined) {
    const shown = `${range.low ?? '?'}–${range.high ?? '?'} L/min`;
    const detail = `The flow is given as a range (${shown}), not one setting, so no flow was read.`;
    notes.add('unrecognised', 'Ordered oxygen flow', detail);
  }
  return flow;
}

function readFio2(
  coded: number | undefined,
  written: readonly SettingTextRead[],
  notes: OrderNotes,
): number | undefined {
  const writtenFio2 = written.find((w) => w.setFio2Fraction !== undefined)?.setFio2Fraction;
  if (coded === undefined) {
    return writtenFio2 === undefined ? undefined : notes.plausibleFio2(writtenFio2);
  }
  if (writtenFio2 !== undefined && writtenFio2 !== coded) {
    notes.disagree('Ordered FiO2', String(coded), String(writtenFio2));
  }
  return coded;
}

/** What a new target written into an order depends on: the note on its target, and whether it stops oxygen or is for comfort. */
export interface TargetWordsRead {
  readonly targetNote: TargetNote | undefined;
  /** 'stop' or 'comfort' when `readOrder` reads the order's purpose so; undefined for any other purpose. */
  readonly stopOrComfort: 'stop' | 'comfort' | undefined;
}

/**
 * The order's target note and whether it stops oxygen or is for comfort, as `readOrder` reads them,
 * without reading its device or settings: neither the target nor a stop or comfort purpose depends
 * on them (the flow read only tells room air from titration).
 */
export function readTargetWords(resource: FhirResource, type: OrderResourceType): TargetWordsRead {
  const known = readByOrder.get(resource);
  if (known !== undefined && known.type === type) {
    return known.read;
  }
  const parts = orderParts(resource, type);
  const texts = parts.texts.map(currentWords);
  const reference = `${type}/${resource.id ?? ''}`;
  const target = readTarget(parts, texts, texts.map(findTargetStatements), reference, new OrderNotes(reference));
  const purpose = readOrderPurpose(purposeInputs(resource, texts, undefined));
  return { targetNote: target.note, stopOrComfort: stopOrComfortOf(purpose) };
}

/**
 * What `readOrder` read of each order's target words, so that planning a change to the same order
 * (apply-change.ts) does not read all its words again. Keyed on the resource object, which nothing
 * changes once it is read (a change is planned on a copy, and a copy is read afresh); dropped with it.
 */
const readByOrder = new WeakMap<FhirResource, { readonly type: OrderResourceType; readonly read: TargetWordsRead }>();

function stopOrComfortOf(purpose: OrderPurpose): TargetWordsRead['stopOrComfort'] {
  return purpose === 'stop' || purpose === 'comfort' ? purpose : undefined;
}

/** What the order's purpose is read from (made whole here rather than spread with the flow, as targetOf says). */
function purposeInputs(resource: FhirResource, texts: readonly string[], flowLPerMin: number | undefined): PurposeInputs {
  return { status: stringAt(resource, 'status'), doNotPerform: resource['doNotPerform'] === true, texts, flowLPerMin };
}

/** Reads an oxygen order; `reference` is its `Type/id`, `isSubject` whether it is under check. */
export function readOrder(
  resource: FhirResource,
  type: OrderResourceType,
  reference: string,
  isSubject: boolean,
): OrderRead {
  const notes = new OrderNotes(reference);
  const parts = orderParts(resource, type);
  // Words a suggestion marked as a change note are for the reader of the order, not what it says.
  const texts = parts.texts.map(currentWords);
  const coded = readStructuredSettings(parts.quantities, notes);
  const device = readDevice({ ...parts, texts }, notes);
  const statements = texts.map(findTargetStatements);
  const written = texts.map((t, i) => readSettingText(t, device.device, statements[i]));
  const flowLPerMin = readFlow(parts, coded.flow, written, notes);
  const setFio2Fraction = readFio2(coded.fio2, written, notes);
  const target = readTarget(parts, texts, statements, reference, notes);
  const status = stringAt(resource, 'status');
  const purpose = readOrderPurpose(purposeInputs(resource, texts, flowLPerMin));
  // The flow only tells room air from titration, so a stop or comfort purpose is as readTargetWords reads it.
  readByOrder.set(resource, { type, read: { targetNote: target.note, stopOrComfort: stopOrComfortOf(purpose) } });
  return {
    order: {
      reference,
      resourceType: type,
      status,
      device: device.device,
      deviceText: device.text,
      flowLPerMin,
      setFio2Fraction,
      target: target.target,
      targetNote: target.note,
      purpose,
      authoredOn: withUtcIfZoneless(stringAt(resource, 'authoredOn')),
      isSubject,
    },
    notes: notes.list,
  };
}
