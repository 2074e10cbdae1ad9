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

function objects(holder: unknown, key: string): Json[] {
  if (!isObject(holder)) return [];
  const value = holder[key];
  return Array.isArray(value) ? value.filter((v): v is Json => isObject(v)) : [];
}

function slot(holder: unknown, key: string): TextSlot[] {
  if (!isObject(holder)) return [];
  const text = holder[key];
  return typeof text === 'string' ? [{ holder: holder, key, text }] : [];
}

/** The concept's text, then each coding's display. */
function conceptSlots(concept: unknown): TextSlot[] {
  if (!isObject(concept)) return [];
  const displays = objects(concept, 'coding').flatMap((c) => slot(c, 'display').map((s) => ({ ...s, concept })));
  return [...slot(concept, 'text'), ...displays];
}

export function textSlots(resource: Json): readonly TextSlot[] {
  const notes = objects(resource, 'note').flatMap((n) => slot(n, 'text'));
  switch (resource['resourceType']) {
    case 'MedicationRequest':
      return [
        ...objects(resource, 'dosageInstruction').flatMap((d) => [
          ...slot(d, 'text'),
          ...slot(d, 'patientInstruction'),
          ...objects(d, 'additionalInstruction').flatMap(conceptSlots),
        ]),
        ...notes,
        ...slot(resource['medicationCodeableConcept'], 'text'),
      ];
    case 'ServiceRequest':
      return [
        ...objects(resource, 'orderDetail').flatMap(conceptSlots),
        ...slot(resource, 'patientInstruction'),
        ...notes,
        ...slot(resource['code'], 'text'),
      ];
    case 'DeviceRequest':
      return [
        ...objects(resource, 'parameter').flatMap((p) => conceptSlots(p['valueCodeableConcept'])),
        ...notes,
        ...slot(resource['codeCodeableConcept'], 'text'),
      ];
    default:
      return [];
  }
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
