import type { DeviceKind, Outcome } from '../types.js';
import { cpapNivModel } from './cpap-niv.js';
import { highFlowNasalCannulaModel } from './high-flow-nasal-cannula.js';
import { nasalCannulaModel } from './nasal-cannula.js';
import { reservoirMaskModel } from './reservoir-mask.js';
import { simpleFaceMaskModel } from './simple-face-mask.js';
import { tracheostomyMaskModel } from './tracheostomy-mask.js';
import type { DeliveryEstimate, DeliveryInput, DeviceModel } from './types.js';
import { venturiMaskModel } from './venturi-mask.js';

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
