import type { DeviceKind } from '../core/types.js';
import { LOINC_OBSERVATIONS, SNOMED_DEVICE_BY_CODE, SYSTEMS } from './codes.js';
import type { FhirResource } from './gathered-data.js';
import { codingsOf, isObject, objectAt, objectsAt, stringAt, wordsOf, type JsonObject } from './json.js';
import type { OrderResourceType } from './is-oxygen-order.js';

/**
 * Collects, per request type, the elements an oxygen order may state its device, flow, FiO2 and
 * target in (cds-hooks.md §4 lists the R4 elements). Reading them is read-order.ts's job.
 */

/** A quantity found in a coded element, with what the element says it is (when it says). */
export interface FoundQuantity {
  readonly value: unknown;
  /** 'either' when the unit decides; 'flow-only' for a parameter whose code names neither. */
  readonly says: 'flow' | 'fio2' | 'either' | 'flow-only';
  readonly where: string;
}

export interface OrderParts {
  /** A device named by a code (e.g. SNOMED CT 371907003, oxygen by nasal cannula). */
  readonly deviceFromCode: { readonly device: DeviceKind; readonly text: string } | undefined;
  /** What the order calls its device (DeviceRequest code, MedicationRequest method), for display. */
  readonly deviceName: string | undefined;
  /** Words of coded elements that may name the device, in priority order. */
  readonly deviceWords: readonly string[];
  readonly quantities: readonly FoundQuantity[];
  /** FHIR Ranges given where one flow was expected (rateRange, quantityRange, a flow parameter). */
  readonly flowRanges: readonly unknown[];
  /** Objects that may carry the target extension: the resource first, then dosage instructions. */
  readonly targetHolders: readonly JsonObject[];
  /** DeviceRequest parameters whose code names the target, with their valueRange. */
  readonly targetRanges: readonly unknown[];
  /** Free text in priority order: instructions first, notes and the order's name last. */
  readonly texts: readonly string[];
}

const FLOW_WORDS = /\bflow\b/i;
const FIO2_WORDS = /\bfi\s?o2\b|concentration|inspired oxygen|oxygen percent/i;
const TARGET_WORDS = /\btarget|\bspo2\b|saturation/i;

function textsOf(items: readonly JsonObject[], key: string): string[] {
  return items.map((i) => stringAt(i, key)).filter((t): t is string => t !== undefined);
}

function codedDevice(concept: unknown): OrderParts['deviceFromCode'] {
  for (const coding of codingsOf(concept)) {
    const code = coding.code?.trim();
    const isSnomed = coding.system === SYSTEMS.snomed && code !== undefined;
    const device = isSnomed ? SNOMED_DEVICE_BY_CODE[code] : undefined;
    if (device !== undefined) {
      return { device, text: coding.display ?? `SNOMED CT ${code}` };
    }
  }
  return undefined;
}

/** What a DeviceRequest parameter's code says it holds, by LOINC code or by its words. */
export function parameterSays(code: unknown): 'flow' | 'fio2' | 'target' | undefined {
  for (const coding of codingsOf(code)) {
    const code = coding.code?.trim();
    const known = coding.system === SYSTEMS.loinc && code !== undefined ? LOINC_OBSERVATIONS[code] : undefined;
    if (known?.kind === 'o2-flow') return 'flow';
    if (known?.kind === 'fio2') return 'fio2';
  }
  const words = wordsOf(code).join(' ');
  if (TARGET_WORDS.test(words)) return 'target';
  if (FIO2_WORDS.test(words)) return 'fio2';
  if (FLOW_WORDS.test(words)) return 'flow';
  return undefined;
}

function medicationParts(resource: FhirResource): OrderParts {
  const dosages = objectsAt(resource, 'dosageInstruction');
  // What each dosage lists, gathered in one pass: on Node 20 a flatMap costs several times this loop.
  const doseAndRates: JsonObject[] = [];
  const deviceWords: string[] = [];
  const instructionWords: string[] = [];
  for (const d of dosages) {
    doseAndRates.push(...objectsAt(d, 'doseAndRate'));
    deviceWords.push(...wordsOf(d['method']), ...wordsOf(d['route']), ...wordsOf(d['site']));
    for (const instruction of objectsAt(d, 'additionalInstruction')) {
      instructionWords.push(...wordsOf(instruction));
    }
  }
  const quantities: FoundQuantity[] = [];
  for (const [i, dr] of doseAndRates.entries()) {
    for (const key of ['rateQuantity', 'doseQuantity']) {
      if (isObject(dr[key])) {
        quantities.push({ value: dr[key], says: 'either', where: `doseAndRate[${i}].${key}` });
      }
    }
  }
  const medicationText = stringAt(objectAt(resource, 'medicationCodeableConcept'), 'text');
  return {
    deviceFromCode: undefined,
    deviceName: dosages.map((d) => wordsOf(d['method'])[0]).find((w) => w !== undefined),
    deviceWords,
    quantities,
    flowRanges: doseAndRates.map((dr) => dr['rateRange']).filter(isObject),
    targetHolders: [resource, ...dosages],
    targetRanges: [],
    texts: [
      ...textsOf(dosages, 'text'),
      ...textsOf(dosages, 'patientInstruction'),
      ...instructionWords,
      ...textsOf(objectsAt(resource, 'note'), 'text'),
      ...(medicationText === undefined ? [] : [medicationText]),
    ],
  };
}

function serviceParts(resource: FhirResource): OrderParts {
  const details = objectsAt(resource, 'orderDetail');
  const detailWords: string[] = [];
  for (const d of details) {
    detailWords.push(...wordsOf(d));
  }
  const codeText = stringAt(objectAt(resource, 'code'), 'text');
  const patientInstruction = stringAt(resource, 'patientInstruction');
  return {
    deviceFromCode: codedDevice(resource['code']),
    deviceName: undefined,
    deviceWords: detailWords,
    quantities: isObject(resource['quantityQuantity'])
      ? [{ value: resource['quantityQuantity'], says: 'either', where: 'quantityQuantity' }]
      : [],
    flowRanges: isObject(resource['quantityRange']) ? [resource['quantityRange']] : [],
    targetHolders: [resource],
    targetRanges: [],
    texts: [
      ...textsOf(details, 'text'),
      ...(patientInstruction === undefined ? [] : [patientInstruction]),
      ...textsOf(objectsAt(resource, 'note'), 'text'),
      ...(codeText === undefined ? [] : [codeText]),
    ],
  };
}

function deviceParts(resource: FhirResource): OrderParts {
  const quantities: FoundQuantity[] = [];
  const flowRanges: unknown[] = [];
  const targetRanges: unknown[] = [];
  const valueWords: string[] = [];
  for (const [i, parameter] of objectsAt(resource, 'parameter').entries()) {
    const says = parameterSays(parameter['code']);
    if (isObject(parameter['valueQuantity'])) {
      if (says !== 'target') {
        const value = parameter['valueQuantity'];
        quantities.push({ value, says: says ?? 'flow-only', where: `parameter[${i}]` });
      }
    }
    if (isObject(parameter['valueRange']) && says === 'target') {
      targetRanges.push(parameter['valueRange']);
    } else if (isObject(parameter['valueRange']) && says === 'flow') {
      flowRanges.push(parameter['valueRange']);
    }
    valueWords.push(...wordsOf(parameter['valueCodeableConcept']));
  }
  const codeDisplay = stringAt(objectAt(resource, 'codeReference'), 'display');
  return {
    deviceFromCode: codedDevice(resource['codeCodeableConcept']),
    deviceName: wordsOf(resource['codeCodeableConcept'])[0] ?? codeDisplay,
    deviceWords: [
      ...wordsOf(resource['codeCodeableConcept']),
      ...(codeDisplay === undefined ? [] : [codeDisplay]),
      ...valueWords,
    ],
    quantities,
    flowRanges,
    targetHolders: [resource],
    targetRanges,
    texts: [...valueWords, ...textsOf(objectsAt(resource, 'note'), 'text')],
  };
}

export function orderParts(resource: FhirResource, type: OrderResourceType): OrderParts {
  switch (type) {
    case 'MedicationRequest':
      return medicationParts(resource);
    case 'ServiceRequest':
      return serviceParts(resource);
    case 'DeviceRequest':
      return deviceParts(resource);
  }
}
