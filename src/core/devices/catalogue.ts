import type { DeviceCatalogue, FlowLimitsLPerMin, StockedVenturiSetting } from '../policy.js';
import { oncePerObject } from '../once-per-object.js';
import type { DeviceKind, OrderChange } from '../types.js';
import { cpapNivModel } from './cpap-niv.js';
import { highFlowNasalCannulaModel } from './high-flow-nasal-cannula.js';
import { nasalCannulaModel } from './nasal-cannula.js';
import { reservoirMaskModel } from './reservoir-mask.js';
import { simpleFaceMaskModel } from './simple-face-mask.js';
import { tracheostomyMaskModel } from './tracheostomy-mask.js';
import type { DeviceModel } from './types.js';
import {
  findVenturiSetting,
  VENTURI_FLOW_RANGE_L_PER_MIN,
  VENTURI_SETTINGS,
  VENTURI_SETTING_MATCH_TOLERANCE,
  type VenturiSetting,
} from './venturi-mask.js';

/**
 * The hospital's device catalogue (policy `devices`) as the rules read it. Pure lookups over the
 * frozen policy: which devices a card may offer, at which flows, and which Venturi valves with the
 * minimum flow printed on them. The built-in values of the device models are the default, so a
 * policy without a `devices` section behaves as the models alone did.
 */

/** The device kinds with flow limits in the catalogue: every kind but the Venturi mask, whose flows follow its valves. */
export type FlowLimitedDeviceKind = Exclude<DeviceKind, 'venturi-mask'>;

const FLOW_LIMITED_MODELS: Readonly<Record<FlowLimitedDeviceKind, DeviceModel>> = {
  'nasal-cannula': nasalCannulaModel,
  'simple-face-mask': simpleFaceMaskModel,
  'reservoir-mask': reservoirMaskModel,
  'high-flow-nasal-cannula': highFlowNasalCannulaModel,
  'tracheostomy-mask': tracheostomyMaskModel,
  'cpap-niv': cpapNivModel,
};

export const FLOW_LIMITED_DEVICE_KINDS = Object.keys(FLOW_LIMITED_MODELS) as readonly FlowLimitedDeviceKind[];

/**
 * Every device stocked at the device models' built-in ranges (BTS 2017 Tables 2 and 4; the sources in
 * each model file) and every standard Venturi valve at its usual minimum flow (BTS 2017 Table 4 for
 * 24 % and 28 %, device labelling for the rest). The policy schema's default.
 */
export const BUILT_IN_DEVICE_CATALOGUE: DeviceCatalogue = Object.freeze({
  flowLimits: Object.freeze(
    Object.fromEntries(
      FLOW_LIMITED_DEVICE_KINDS.map((kind) => {
        const { min, max } = FLOW_LIMITED_MODELS[kind].flowRangeLPerMin;
        return [kind, Object.freeze({ from: min, to: max })];
      }),
    ),
  ),
  venturiSettings: Object.freeze(
    VENTURI_SETTINGS.map((s) => Object.freeze({ fio2Fraction: s.fio2Fraction, minimumFlowLPerMin: s.minimumFlowLPerMin })),
  ),
});

/** Whether the hospital stocks a device kind, so that a card may offer it. */
export function isStocked(catalogue: DeviceCatalogue, kind: DeviceKind): boolean {
  return kind === 'venturi-mask' ? catalogue.venturiSettings.length > 0 : catalogue.flowLimits[kind] !== undefined;
}

/** The hospital's flow limits for a stocked kind; undefined when it is not stocked. */
export function stockedFlowLimits(catalogue: DeviceCatalogue, kind: FlowLimitedDeviceKind): FlowLimitsLPerMin | undefined {
  return catalogue.flowLimits[kind];
}

/**
 * The flow range an order on this device is checked against: the hospital's limits when it stocks
 * the device, else the model's built-in range (a patient may arrive on a device the ward does not
 * stock; the published range still applies to it).
 */
export function flowRangeFor(
  catalogue: DeviceCatalogue,
  kind: DeviceKind,
): { readonly min: number; readonly max: number; readonly local: boolean } {
  // A Venturi mask's flows follow its valves (venturi-flow-insufficient); its model range stands.
  const limits = kind === 'venturi-mask' ? undefined : catalogue.flowLimits[kind];
  if (limits !== undefined) {
    return { min: limits.from, max: limits.to, local: true };
  }
  const { min, max } = kind === 'venturi-mask' ? VENTURI_FLOW_RANGE_L_PER_MIN : FLOW_LIMITED_MODELS[kind].flowRangeLPerMin;
  return { min, max, local: false };
}

const LOCAL_VALVE_BASIS = "this hospital's valve label (policy devices)";

/**
 * The stocked valves as the Venturi model reads them. A minimum flow equal to the built-in one keeps
 * its published basis; another is the hospital's label.
 */
export function stockedVenturiSettings(catalogue: DeviceCatalogue): readonly VenturiSetting[] {
  return venturiSettingsOf(catalogue);
}

/**
 * Worked out once per catalogue: a catalogue is part of a loaded policy, which is frozen, and the
 * assessment, the FiO2 in force at each reading and several rules all ask for the valves.
 */
const venturiSettingsOf = oncePerObject(
  (catalogue: DeviceCatalogue): readonly VenturiSetting[] => Object.freeze(readVenturiSettings(catalogue).map((s) => Object.freeze(s))),
);

function readVenturiSettings(catalogue: DeviceCatalogue): VenturiSetting[] {
  return catalogue.venturiSettings.map((stocked: StockedVenturiSetting): VenturiSetting => {
    const builtIn = findVenturiSetting(stocked.fio2Fraction);
    return {
      fio2Fraction: stocked.fio2Fraction,
      minimumFlowLPerMin: stocked.minimumFlowLPerMin,
      minimumFlowBasis:
        builtIn !== undefined && builtIn.minimumFlowLPerMin === stocked.minimumFlowLPerMin
          ? builtIn.minimumFlowBasis
          : LOCAL_VALVE_BASIS,
    };
  });
}

/** The stocked valve at this setting (within the match tolerance), or undefined when none is stocked. */
export function stockedVenturiSetting(catalogue: DeviceCatalogue, fio2Fraction: number): VenturiSetting | undefined {
  return stockedVenturiSettings(catalogue).find(
    (s) => Math.abs(s.fio2Fraction - fio2Fraction) <= VENTURI_SETTING_MATCH_TOLERANCE,
  );
}

/**
 * Whether a one-click change may be offered under this catalogue: any change but a device change, or
 * a device change to a stocked device (and, for a Venturi mask, a stocked valve).
 */
export function changeUsesStock(change: OrderChange, catalogue: DeviceCatalogue): boolean {
  if (change.kind !== 'set-device') {
    return true;
  }
  if (change.device === 'venturi-mask') {
    return change.setFio2Fraction !== undefined && stockedVenturiSetting(catalogue, change.setFio2Fraction) !== undefined;
  }
  return isStocked(catalogue, change.device);
}
