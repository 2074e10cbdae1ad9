import type { DeviceKind } from '../core/types.js';
import { OXYGEN_CODES, SYSTEMS } from './codes.js';
import { isObject, quantityOf, wordsOf } from './json.js';
import { parameterSays } from './order-parts.js';
import { readDeviceText } from './read-device-text.js';
import { readQuantity } from './read-quantity.js';
import { findFio2Mentions, findFlowMentions } from './read-setting-text.js';
import { deviceWords, formatPercent } from './rewrite-text.js';
import type { Json } from './text-slots.js';

/**
 * Writes a flow, a set FiO2 or a device into the coded elements of a (copied) oxygen order, in the
 * places read-order.ts reads them from (docs/fhir-input.md, "Writing a change"). Choice elements
 * (rate[x], quantity[x], value[x], code[x]) keep one type only.
 */

export function objects(holder: Json, key: string): Json[] {
  const value = holder[key];
  return Array.isArray(value) ? value.filter((v): v is Json => isObject(v)) : [];
}

/** The first object of the array at `key`, created (or replacing a non-object) when needed. */
export function firstObject(holder: Json, key: string): Json {
  const current = holder[key];
  const list: unknown[] = Array.isArray(current) ? current : [];
  holder[key] = list;
  if (!isObject(list[0])) {
    list.splice(0, list.length === 0 ? 0 : 1, {});
  }
  return list[0] as Json;
}

export function ucumQuantity(value: number, unit: string): Json {
  return { value, unit, system: SYSTEMS.ucum, code: unit };
}

const flowQuantity = (flow: number): Json => ucumQuantity(flow, 'L/min');
const percentQuantity = (fraction: number): Json => ucumQuantity(Number(formatPercent(fraction)), '%');

function isFlow(value: unknown): boolean {
  const quantity = quantityOf(value);
  return quantity !== undefined && readQuantity(quantity, 'L/min').kind === 'ok';
}

function isShare(value: unknown): boolean {
  const quantity = quantityOf(value);
  const hasUnit = quantity?.unit !== undefined || quantity?.code !== undefined;
  return quantity !== undefined && hasUnit && readQuantity(quantity, 'fraction').kind === 'ok';
}

const PARAMETER_CODES = {
  flow: { code: '3151-8', display: 'Inhaled oxygen flow rate', text: 'Oxygen flow' },
  fio2: { code: '3150-0', display: 'Inhaled oxygen concentration', text: 'FiO2' },
} as const;

/** Replaces the DeviceRequest parameters of one kind with one new parameter (or none). */
function setParameter(resource: Json, kind: 'flow' | 'fio2', value: Json | undefined): void {
  const others = objects(resource, 'parameter').filter((p) => parameterSays(p['code']) !== kind);
  const { code, display, text } = PARAMETER_CODES[kind];
  const coded = { coding: [{ system: SYSTEMS.loinc, code, display }], text };
  resource['parameter'] = value === undefined ? others : [...others, { code: coded, valueQuantity: value }];
}

function detailsMention(resource: Json, find: (text: string) => readonly unknown[]): boolean {
  const details = objects(resource, 'orderDetail');
  return details.some((d) => typeof d['text'] === 'string' && find(d['text']).length > 0);
}

export function writeFlow(resource: Json, flow: number): void {
  const type = resource['resourceType'];
  if (type === 'MedicationRequest') {
    for (const dosage of objects(resource, 'dosageInstruction')) {
      for (const entry of objects(dosage, 'doseAndRate')) {
        for (const key of ['rateQuantity', 'doseQuantity']) {
          if (isFlow(entry[key])) entry[key] = flowQuantity(flow);
        }
      }
    }
    const first = firstObject(firstObject(resource, 'dosageInstruction'), 'doseAndRate');
    delete first['rateRange'];
    delete first['rateRatio'];
    if (isFlow(first['doseQuantity'])) delete first['doseQuantity'];
    first['rateQuantity'] = flowQuantity(flow);
  } else if (type === 'ServiceRequest') {
    // quantity[x] already holding an FiO2 or a ratio stays; the flow then goes into an orderDetail.
    const quantityTaken = isShare(resource['quantityQuantity']) || resource['quantityRatio'] !== undefined;
    if (!quantityTaken) {
      delete resource['quantityRange'];
      resource['quantityQuantity'] = flowQuantity(flow);
    } else if (!detailsMention(resource, findFlowMentions)) {
      resource['orderDetail'] = [...objects(resource, 'orderDetail'), { text: `Oxygen flow ${flow} L/min` }];
    }
  } else if (type === 'DeviceRequest') {
    setParameter(resource, 'flow', flowQuantity(flow));
  }
}

/** Writes a set FiO2, or removes every one when the new device takes none (`fio2` undefined). */
export function writeFio2(resource: Json, fio2: number | undefined): void {
  const type = resource['resourceType'];
  if (type === 'MedicationRequest') {
    for (const dosage of objects(resource, 'dosageInstruction')) {
      for (const entry of objects(dosage, 'doseAndRate')) {
        for (const key of ['rateQuantity', 'doseQuantity']) {
          if (isShare(entry[key])) delete entry[key];
        }
      }
    }
    if (fio2 !== undefined) {
      const first = firstObject(firstObject(resource, 'dosageInstruction'), 'doseAndRate');
      first['doseQuantity'] = percentQuantity(fio2);
    }
  } else if (type === 'ServiceRequest') {
    if (isShare(resource['quantityQuantity'])) delete resource['quantityQuantity'];
    const stated = detailsMention(resource, (t) => findFio2Mentions(t, 'venturi-mask'));
    if (fio2 !== undefined && !stated) {
      resource['orderDetail'] = [...objects(resource, 'orderDetail'), { text: `FiO2 ${formatPercent(fio2)}%` }];
    }
  } else if (type === 'DeviceRequest') {
    setParameter(resource, 'fio2', fio2 === undefined ? undefined : percentQuantity(fio2));
  }
}

function namesDevice(concept: unknown): boolean {
  return wordsOf(concept).some((w) => readDeviceText(w) !== undefined);
}

/** Names the new device in the coded elements; its words were rewritten by the caller already. */
export function writeDevice(resource: Json, device: DeviceKind, setFio2Fraction: number | undefined): void {
  const words = deviceWords(device, setFio2Fraction);
  const label = words.charAt(0).toUpperCase() + words.slice(1);
  const type = resource['resourceType'];
  if (type === 'MedicationRequest') {
    firstObject(resource, 'dosageInstruction')['method'] = { text: label };
  } else if (type === 'ServiceRequest') {
    // A detail coded as the old device loses its (now wrong) codings and keeps its rewritten words.
    const details = objects(resource, 'orderDetail').flatMap((d) => {
      if (!namesDevice({ coding: d['coding'] })) return [d];
      delete d['coding'];
      return typeof d['text'] === 'string' ? [d] : [];
    });
    resource['orderDetail'] = details.some(namesDevice) ? details : [{ text: label }, ...details];
    const code = resource['code'];
    // SNOMED CT 371907003 (oxygen by nasal cannula) would contradict any other device.
    if (isObject(code) && device !== 'nasal-cannula' && Array.isArray(code['coding'])) {
      (code as Json)['coding'] = code['coding'].map((c: unknown) =>
        isObject(c) && c['system'] === SYSTEMS.snomed && c['code'] === OXYGEN_CODES.oxygenByNasalCannula
          ? { system: SYSTEMS.snomed, code: OXYGEN_CODES.oxygenTherapy, display: 'Oxygen therapy' }
          : c,
      );
    }
  } else if (type === 'DeviceRequest') {
    delete resource['codeReference'];
    resource['codeCodeableConcept'] = { text: label };
  }
}
