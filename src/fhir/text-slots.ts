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

/**
 * The array with its empty items removed, their insides pruned in place. Nulls stay where a
 * `name`/`_name` pair of equal length sits side by side: FHIR R4 JSON keeps a primitive array and its
 * extensions aligned by position with nulls (from memory). The same array when nothing is removed, so
 * a draft with nothing to prune is walked without building anything.
 */
function prunedItems(items: readonly unknown[], keepNulls: boolean): readonly unknown[] {
  let kept: unknown[] | undefined;
  for (let index = 0; index < items.length; index += 1) {
    const item = items[index];
    const pruned = Array.isArray(item) ? prunedItems(item, false) : item;
    if (isObject(pruned)) pruneEmpty(pruned);
    const keep = !isEmptyValue(pruned) || (pruned === null && keepNulls);
    if (kept === undefined) {
      if (keep && pruned === item) continue;
      kept = items.slice(0, index);
    }
    if (keep) kept.push(pruned);
  }
  return kept ?? items;
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
  for (const key in value) {
    if (!Object.hasOwn(value, key)) continue;
    const inner = value[key];
    if (key === 'note' && Array.isArray(inner) && inner.some(isNoteWithoutText)) {
      value[key] = inner.filter((n) => !isNoteWithoutText(n));
    }
    const current = value[key];
    if (Array.isArray(current)) {
      const partner = key.charCodeAt(0) === 95 /* _ */ && /^_[A-Za-z]/.test(key) ? value[key.slice(1)] : value[`_${key}`];
      const aligned = Array.isArray(partner) && partner.length === current.length;
      const pruned = prunedItems(current, aligned);
      if (pruned !== current) setOwn(value, key, pruned);
    } else if (isObject(current)) {
      pruneEmpty(current);
    }
    if (isEmptyValue(value[key])) delete value[key];
  }
}
