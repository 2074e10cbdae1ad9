/**
 * Narrowing helpers for untrusted FHIR JSON. Every reader goes through these, so a field of the
 * wrong shape is skipped (undefined or an empty list) rather than thrown on.
 */

export type JsonObject = Readonly<Record<string, unknown>>;

export function isObject(value: unknown): value is JsonObject {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

/** The object at `key`, or undefined. */
export function objectAt(value: unknown, key: string): JsonObject | undefined {
  if (!isObject(value)) {
    return undefined;
  }
  const inner = value[key];
  return isObject(inner) ? inner : undefined;
}

/** The array at `key` (a lone object is not wrapped: FHIR arrays are always arrays). */
export function arrayAt(value: unknown, key: string): readonly unknown[] {
  if (!isObject(value)) {
    return [];
  }
  const inner = value[key];
  return Array.isArray(inner) ? inner : [];
}

/** The objects of the array at `key`, skipping anything that is not an object. */
export function objectsAt(value: unknown, key: string): readonly JsonObject[] {
  return arrayAt(value, key).filter(isObject);
}

/** A non-blank string at `key`, trimmed. */
export function stringAt(value: unknown, key: string): string | undefined {
  if (!isObject(value)) {
    return undefined;
  }
  const inner = value[key];
  if (typeof inner !== 'string') {
    return undefined;
  }
  const trimmed = inner.trim();
  return trimmed === '' ? undefined : trimmed;
}

/** A string field, or undefined when it is absent or of another type (the field, not the whole value, is dropped). */
function optionalString(value: unknown): string | undefined {
  return typeof value === 'string' ? value : undefined;
}

/** FHIR Coding, narrowed: a field of the wrong type is dropped, not the whole coding. */
export interface Coding {
  readonly system?: string | undefined;
  readonly code?: string | undefined;
  readonly display?: string | undefined;
}

/** FHIR Quantity, narrowed: a finite number value is required; unit spellings are kept for display. */
export interface Quantity {
  readonly value: number;
  readonly unit?: string | undefined;
  readonly system?: string | undefined;
  readonly code?: string | undefined;
}

/**
 * The four fields of a Quantity this service reads, or undefined without a finite number value.
 * Checked by hand rather than with a schema: it runs for every observation and order quantity, and
 * only these fields are ever read.
 */
export function quantityOf(value: unknown): Quantity | undefined {
  if (!isObject(value)) {
    return undefined;
  }
  const number = value['value'];
  if (typeof number !== 'number' || !Number.isFinite(number)) {
    return undefined;
  }
  return {
    value: number,
    unit: optionalString(value['unit']),
    system: optionalString(value['system']),
    code: optionalString(value['code']),
  };
}

export const UCUM_SYSTEM = 'http://unitsofmeasure.org';

/**
 * The unit of a quantity as the sender meant it: the UCUM `code` when the system is UCUM (or absent),
 * otherwise the human `unit`. Empty when neither is given.
 */
export function unitOf(quantity: Quantity): string {
  const codeIsUcum = quantity.system === undefined || quantity.system === UCUM_SYSTEM;
  if (quantity.code !== undefined && codeIsUcum) {
    return quantity.code;
  }
  return quantity.unit ?? quantity.code ?? '';
}

/** The codings of a CodeableConcept, each narrowed. */
export function codingsOf(concept: unknown): readonly Coding[] {
  const out: Coding[] = [];
  for (const raw of arrayAt(concept, 'coding')) {
    if (isObject(raw)) {
      out.push({ system: optionalString(raw['system']), code: optionalString(raw['code']), display: optionalString(raw['display']) });
    }
  }
  return out;
}

/** The words of a CodeableConcept: its text first, then each coding's display. */
export function wordsOf(concept: unknown): readonly string[] {
  const words: string[] = [];
  const text = stringAt(concept, 'text');
  if (text !== undefined) {
    words.push(text);
  }
  for (const coding of codingsOf(concept)) {
    const display = coding.display?.trim();
    if (display !== undefined && display !== '' && !words.includes(display)) {
      words.push(display);
    }
  }
  return words;
}

/** True when the concept carries `code` in `system`. */
export function hasCode(concept: unknown, system: string, code: string): boolean {
  return codingsOf(concept).some((c) => c.system === system && c.code?.trim() === code);
}

/** Removes float noise from a converted value (e.g. 28.000000000000004 → 28). */
export function tidyNumber(value: number): number {
  // Most values read are whole numbers (SpO2 95 %, 2 L/min), which are their own 12-digit form: the
  // string round trip is skipped for them (0 stays 0 and -0 becomes 0, as the round trip gives).
  if (Number.isSafeInteger(value) && Math.abs(value) < 1e12) {
    return value === 0 ? 0 : value;
  }
  return Number(value.toPrecision(12));
}
