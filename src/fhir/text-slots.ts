import { isObject } from './json.js';

/**
 * The free-text fields of an order that the reader takes words from (read-order.ts), as writable
 * places, so a change is written into every one of them that stated the old value. A coding's
 * `display` in a concept the reader reads (additionalInstruction, orderDetail, a parameter's value) is
 * a slot too, with its concept: a display that stated the old value cannot simply be reworded, since
 * its code would still mean the old value, so the writer drops that coding and keeps the new words in
 * the concept's text.
 */

export type Json = Record<string, unknown>;

export interface TextSlot {
  readonly holder: Json;
  readonly key: string;
  readonly text: string;
  /** For a coding's display: the CodeableConcept holding the coding. */
  readonly concept?: Json;
}

/** The array at `holder[key]`, or none. */
function items(holder: unknown, key: string): readonly unknown[] {
  const value = isObject(holder) ? holder[key] : undefined;
  return Array.isArray(value) ? value : [];
}

/**
 * The slots of one resource, added in the order the reader reads them into one list: a change reads
 * the slots before and after writing, so no list is built per field and joined.
 */
class SlotList {
  readonly slots: TextSlot[] = [];

  /** `holder[key]`, when the holder is an object and the value a string. */
  add(holder: unknown, key: string, concept?: Json): void {
    if (!isObject(holder)) return;
    const text = holder[key];
    if (typeof text !== 'string') return;
    this.slots.push(concept === undefined ? { holder, key, text } : { holder, key, text, concept });
  }

  /** The concept's text, then each coding's display. */
  addConcept(concept: unknown): void {
    if (!isObject(concept)) return;
    this.add(concept, 'text');
    for (const coding of items(concept, 'coding')) this.add(coding, 'display', concept);
  }

  addNotes(resource: Json): void {
    for (const note of items(resource, 'note')) this.add(note, 'text');
  }
}

export function textSlots(resource: Json): readonly TextSlot[] {
  const list = new SlotList();
  switch (resource['resourceType']) {
    case 'MedicationRequest':
      for (const dosage of items(resource, 'dosageInstruction')) {
        list.add(dosage, 'text');
        list.add(dosage, 'patientInstruction');
        for (const instruction of items(dosage, 'additionalInstruction')) list.addConcept(instruction);
      }
      list.addNotes(resource);
      list.add(resource['medicationCodeableConcept'], 'text');
      break;
    case 'ServiceRequest':
      for (const detail of items(resource, 'orderDetail')) list.addConcept(detail);
      list.add(resource, 'patientInstruction');
      list.addNotes(resource);
      list.add(resource['code'], 'text');
      break;
    case 'DeviceRequest':
      for (const parameter of items(resource, 'parameter')) {
        if (isObject(parameter)) list.addConcept(parameter['valueCodeableConcept']);
      }
      list.addNotes(resource);
      list.add(resource['codeCodeableConcept'], 'text');
      break;
  }
  return list.slots;
}

/** Whether the object has no own enumerable key, found without listing its keys. */
function hasNoKeys(value: Json): boolean {
  for (const key in value) {
    if (Object.hasOwn(value, key)) return false;
  }
  return true;
}

/** What FHIR JSON does not allow as a value: null, blank strings, empty arrays and objects. */
function isEmptyValue(value: unknown): boolean {
  return value === null || value === '' || (Array.isArray(value) ? value.length === 0 : isObject(value) && hasNoKeys(value));
}

/** Own property, even for `__proto__`, where plain assignment would set the prototype instead. */
function setOwn(holder: Json, key: string, value: unknown): void {
  Object.defineProperty(holder, key, { value, enumerable: true, writable: true, configurable: true });
}

/** The item with its insides pruned: arrays copied without their empty items, objects in place. */
function prunedItem(item: unknown): unknown {
  const pruned = Array.isArray(item) ? prunedItems(item) : item;
  if (isObject(pruned)) pruneEmpty(pruned);
  return pruned;
}

/**
 * The array with its empty items removed, their insides pruned in place. The same array when nothing
 * is removed, so a draft with nothing to prune is walked without building anything.
 */
function prunedItems(items: readonly unknown[]): readonly unknown[] {
  let kept: unknown[] | undefined;
  for (let index = 0; index < items.length; index += 1) {
    const item = items[index];
    const pruned = prunedItem(item);
    const keep = !isEmptyValue(pruned);
    if (kept === undefined) {
      if (keep && pruned === item) continue;
      kept = items.slice(0, index);
    }
    if (keep) kept.push(pruned);
  }
  return kept ?? items;
}

/**
 * A primitive array `name` and its extensions `_name`, of equal length, pruned together by position:
 * FHIR R4 JSON keeps the two aligned, with null where one side has nothing (from memory). A position
 * goes only when both sides are empty there; elsewhere an empty side holds the aligning null. An
 * extension side left with nothing but nulls goes whole. Pruning both at once keeps them aligned, and
 * a second pass finds nothing more to remove.
 */
function pruneAlignedPair(holder: Json, valuesKey: string, extensionsKey: string): void {
  const values = holder[valuesKey] as readonly unknown[];
  const extensions = holder[extensionsKey] as readonly unknown[];
  const keptValues: unknown[] = [];
  const keptExtensions: unknown[] = [];
  let changed = false;
  for (let index = 0; index < values.length; index += 1) {
    const value = prunedItem(values[index]);
    const extension = prunedItem(extensions[index]);
    const valueEmpty = isEmptyValue(value);
    const extensionEmpty = isEmptyValue(extension);
    if (valueEmpty && extensionEmpty) {
      changed = true;
      continue;
    }
    const keptValue = valueEmpty ? null : value;
    const keptExtension = extensionEmpty ? null : extension;
    changed ||= keptValue !== values[index] || keptExtension !== extensions[index];
    keptValues.push(keptValue);
    keptExtensions.push(keptExtension);
  }
  if (!changed) return;
  setOwn(holder, valuesKey, keptValues);
  if (keptExtensions.every((extension) => extension === null)) {
    delete holder[extensionsKey];
  } else {
    setOwn(holder, extensionsKey, keptExtensions);
  }
}

/**
 * The `name`/`_name` pair an array under `key` may belong to, and which of the two `key` is not; none
 * for `note` (Annotations, not a primitive array).
 */
function alignedPair(key: string): { readonly valuesKey: string; readonly extensionsKey: string; readonly partnerKey: string } | undefined {
  const valuesKey = key.charCodeAt(0) === 95 /* _ */ && /^_[A-Za-z]/.test(key) ? key.slice(1) : key;
  if (valuesKey === 'note') return undefined;
  const extensionsKey = `_${valuesKey}`;
  return { valuesKey, extensionsKey, partnerKey: key === valuesKey ? extensionsKey : valuesKey };
}

const hasText = (n: unknown): boolean => isObject(n) && typeof n['text'] === 'string' && n['text'].trim() !== '';
const isNoteWithoutText = (n: unknown): boolean => isObject(n) && !hasText(n);

/**
 * Removes what FHIR does not allow to be empty (null, blank strings, empty arrays and objects) and
 * notes left without text (Annotation.text is required), after a rewrite removed words. A draft that
 * arrived with such values is written back without them, so a suggestion carries no null beyond the
 * ones FHIR's array alignment needs. Keys are visited in order, each once; removing the key being
 * visited does not disturb the walk.
 */
export function pruneEmpty(value: Json): void {
  // A `name`/`_name` pair is settled at the first of its keys, as the two arrive: once one is pruned
  // alone, their lengths no longer say whether they were aligned.
  let settled: Set<string> | undefined;
  for (const key in value) {
    if (!Object.hasOwn(value, key)) continue;
    const inner = value[key];
    if (key === 'note' && Array.isArray(inner) && inner.some(isNoteWithoutText)) {
      value[key] = inner.filter((n) => !isNoteWithoutText(n));
    }
    const current = value[key];
    if (Array.isArray(current) && settled?.has(key) !== true) {
      const pair = alignedPair(key);
      const partner = pair === undefined ? undefined : value[pair.partnerKey];
      if (pair !== undefined && Array.isArray(partner)) {
        (settled ??= new Set()).add(pair.partnerKey);
        if (partner.length === current.length) {
          pruneAlignedPair(value, pair.valuesKey, pair.extensionsKey);
        } else {
          pruneArray(value, key);
          pruneArray(value, pair.partnerKey);
        }
      } else {
        pruneArray(value, key);
      }
    } else if (isObject(current)) {
      pruneEmpty(current);
    }
    if (isEmptyValue(value[key])) delete value[key];
  }
}

/** `holder[key]`, an array, without its empty items (an emptied array is left for the caller to drop). */
function pruneArray(holder: Json, key: string): void {
  const current = holder[key] as readonly unknown[];
  const pruned = prunedItems(current);
  if (pruned !== current) setOwn(holder, key, pruned);
}
