import type { DeviceKind, Outcome } from '../types.js';
import { cpapNivModel } from './cpap-niv.js';
import { highFlowNasalCannulaModel } from './high-flow-nasal-cannula.js';
import { nasalCannulaModel } from './nasal-cannula.js';
import { reservoirMaskModel } from './reservoir-mask.js';
import { simpleFaceMaskModel } from './simple-face-mask.js';
import { tracheostomyMaskModel } from './tracheostomy-mask.js';
import type { DeliveryEstimate, DeliveryInput, DeviceModel } from './types.js';
import { venturiMaskModel, type VenturiSetting } from './venturi-mask.js';

export type { DeliveryEstimate, DeliveryInput, DeviceModel, Fio2Range } from './types.js';
export * from './inspiratory-demand.js';
export * from './mixing.js';
export * from './nasal-cannula.js';
export * from './simple-face-mask.js';
export * from './venturi-mask.js';
export * from './reservoir-mask.js';
export * from './high-flow-nasal-cannula.js';
export * from './tracheostomy-mask.js';
export * from './cpap-niv.js';

/** Every device kind's model, keyed by kind. */
export const DEVICE_MODELS: Readonly<Record<DeviceKind, DeviceModel>> = Object.freeze({
  'nasal-cannula': nasalCannulaModel,
  'simple-face-mask': simpleFaceMaskModel,
  'venturi-mask': venturiMaskModel,
  'reservoir-mask': reservoirMaskModel,
  'high-flow-nasal-cannula': highFlowNasalCannulaModel,
  'tracheostomy-mask': tracheostomyMaskModel,
  'cpap-niv': cpapNivModel,
});

/** The delivered-FiO2 estimate for a device kind and its settings. */
export function estimateDelivery(kind: DeviceKind, input: DeliveryInput): Outcome<DeliveryEstimate> {
  return DEVICE_MODELS[kind].estimate(input);
}

/**
 * A device model's input from values that may be unknown: an unknown value is left out, never set to
 * undefined (the models tell "not given" from a value). Built by assignment, in the order the fields
 * are declared, rather than by spreading a small object per field: the assessment builds one for every
 * estimate, and each conditional spread costs about as much as a whole model run.
 */
export function deliveryInput(
  flowLPerMin: number | undefined,
  setFio2Fraction: number | undefined,
  respRatePerMin: number | undefined,
  venturiSettings: readonly VenturiSetting[],
): DeliveryInput {
  const input: { -readonly [K in keyof DeliveryInput]: DeliveryInput[K] } = {};
  if (flowLPerMin !== undefined) {
    input.flowLPerMin = flowLPerMin;
  }
  if (setFio2Fraction !== undefined) {
    input.setFio2Fraction = setFio2Fraction;
  }
  if (respRatePerMin !== undefined) {
    input.respRatePerMin = respRatePerMin;
  }
  if (venturiSettings.length > 0) {
    input.venturiSettings = venturiSettings;
  }
  return input;
}
