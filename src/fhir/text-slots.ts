import { isObject } from './json.js';

/**
 * The free-text fields of an order that the reader takes words from (read-order.ts), as writable
 * places, so a change is written into every one of them that stated the old value.
 */

export type Json = Record<string, unknown>;

export interface TextSlot {
  readonly holder: Json;
  readonly key: string;
  readonly text: string;
}

function objects(holder: unknown, key: string): Json[] {
  if (!isObject(holder)) return [];
  const value = holder[key];
  return Array.isArray(value) ? value.filter((v): v is Json => isObject(v)) : [];
}

function slot(holder: unknown, key: string): TextSlot[] {
  if (!isObject(holder)) return [];
  const text = holder[key];
  return typeof text === 'string' ? [{ holder: holder as Json, key, text }] : [];
}

export function textSlots(resource: Json): readonly TextSlot[] {
  const notes = objects(resource, 'note').flatMap((n) => slot(n, 'text'));
  switch (resource['resourceType']) {
    case 'MedicationRequest':
      return [
        ...objects(resource, 'dosageInstruction').flatMap((d) => [
          ...slot(d, 'text'),
          ...slot(d, 'patientInstruction'),
        ]),
        ...notes,
        ...slot(resource['medicationCodeableConcept'], 'text'),
      ];
    case 'ServiceRequest':
      return [
        ...objects(resource, 'orderDetail').flatMap((d) => slot(d, 'text')),
        ...slot(resource, 'patientInstruction'),
        ...notes,
        ...slot(resource['code'], 'text'),
      ];
    case 'DeviceRequest':
      return [
        ...objects(resource, 'parameter').flatMap((p) => slot(p['valueCodeableConcept'], 'text')),
        ...notes,
        ...slot(resource['codeCodeableConcept'], 'text'),
      ];
    default:
      return [];
  }
}

/**
 * Removes what FHIR does not allow to be empty (blank strings, empty arrays and objects) and notes
 * left without text (Annotation.text is required), after a rewrite removed words.
 */
export function pruneEmpty(value: Json): void {
  for (const [key, inner] of Object.entries(value)) {
    if (key === 'note' && Array.isArray(inner)) {
      const hasText = (n: unknown): boolean => isObject(n) && typeof n['text'] === 'string' && n['text'].trim() !== '';
      value[key] = inner.filter((n) => !isObject(n) || hasText(n));
    }
    const current = value[key];
    if (Array.isArray(current)) {
      for (const item of current) if (isObject(item)) pruneEmpty(item as Json);
      value[key] = current.filter((item) => !(isObject(item) && Object.keys(item).length === 0) && item !== '');
    } else if (isObject(current)) {
      pruneEmpty(current as Json);
    }
    const after = value[key];
    const empty =
      after === '' ||
      (Array.isArray(after) && after.length === 0) ||
      (isObject(after) && Object.keys(after).length === 0);
    if (empty) delete value[key];
  }
}
