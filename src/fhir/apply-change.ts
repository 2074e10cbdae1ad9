import type { OrderChange, SaturationRange } from '../core/types.js';
import { EXTENSION_URLS } from './codes.js';
import type { FhirResource } from './gathered-data.js';
import { isObject } from './json.js';
import { parameterSays } from './order-parts.js';
import { rewriteDevice, rewriteFlow, rewriteTarget, type Rewrite } from './rewrite-text.js';
import { pruneEmpty, textSlots, type Json } from './text-slots.js';
import { firstObject, objects, ucumQuantity, writeDevice, writeFio2, writeFlow } from './write-order-fields.js';

/**
 * The suggestion's new draft: a deep copy of the order with the same resourceType and id, the change
 * written into the coded elements and into every text field that stated the old value, so the order
 * never says two things (docs/fhir-input.md, "Writing a change"). A resource that is not one of the
 * three order types comes back as an unchanged copy. Never throws. Returns undefined when the order
 * cannot be copied whole (e.g. nesting too deep to serialise): an `update` replaces the whole resource,
 * so a partial copy accepted by the user would wipe the rest of the order. No suggestion is better.
 */

function clone(resource: FhirResource): Json | undefined {
  try {
    const copy: unknown = JSON.parse(JSON.stringify(resource));
    return isObject(copy) ? (copy) : undefined;
  } catch {
    return undefined;
  }
}

function writeTarget(resource: Json, range: SaturationRange): void {
  const isOurs = (e: unknown): boolean => isObject(e) && e['url'] === EXTENSION_URLS.targetSaturation;
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

/** Rewrites every text slot; true when any of them stated a value of the kind. */
function rewriteTexts(resource: Json, rewrite: (text: string) => Rewrite): boolean {
  let stated = false;
  for (const slot of textSlots(resource)) {
    const result = rewrite(slot.text);
    stated ||= result.stated;
    slot.holder[slot.key] = result.text;
  }
  return stated;
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

export function applyOrderChange(resource: FhirResource, change: OrderChange): FhirResource | undefined {
  const copy = clone(resource);
  if (copy === undefined) {
    return undefined;
  }
  const type = copy['resourceType'];
  if (type !== 'MedicationRequest' && type !== 'ServiceRequest' && type !== 'DeviceRequest') {
    return copy as FhirResource;
  }
  switch (change.kind) {
    case 'set-target': {
      const { lowPercent, highPercent } = change.range;
      writeTarget(copy, change.range);
      if (!rewriteTexts(copy, (t) => rewriteTarget(t, change.range))) {
        appendToMainText(copy, `Target SpO2 ${lowPercent}-${highPercent}%.`);
      }
      break;
    }
    case 'set-flow':
      writeFlow(copy, change.flowLPerMin);
      rewriteTexts(copy, (t) => rewriteFlow(t, change.flowLPerMin));
      break;
    case 'set-device':
      rewriteTexts(copy, (t) => rewriteDevice(t, change));
      writeDevice(copy, change.device, change.setFio2Fraction);
      writeFlow(copy, change.flowLPerMin);
      writeFio2(copy, change.setFio2Fraction);
      break;
  }
  pruneEmpty(copy);
  return copy as FhirResource;
}
