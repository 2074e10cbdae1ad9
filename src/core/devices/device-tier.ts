import type { DeviceKind } from '../types.js';
import { DEVICE_MODELS } from './index.js';

/**
 * Levels of respiratory support, lowest first: conventional oxygen (nasal cannula, simple face,
 * Venturi, reservoir and tracheostomy masks), high-flow nasal oxygen, then CPAP or NIV. The three
 * levels are the arms trials of acute hypoxaemic respiratory failure compare (standard oxygen, high
 * flow, non-invasive ventilation; FLORALI, Frat et al., NEJM 2015, from memory) and the usual ward
 * escalation ladder (common practice).
 *
 * The tier is a level of support, not an FiO2: a reservoir mask can deliver more oxygen than high
 * flow at a low set FiO2, yet moving a patient from high flow to a mask takes away the flow and the
 * humidification, so it is a step down. A change between conventional devices (a reservoir mask to a
 * 28 % Venturi for a CO2 retainer) stays within one tier; whether it lowers the oxygen is a matter
 * for the rules that judge the saturation.
 */
export const SUPPORT_TIERS = ['conventional-oxygen', 'high-flow', 'pressure-support'] as const;
export type SupportTier = (typeof SUPPORT_TIERS)[number];

const TIER_OF_DEVICE: Readonly<Record<DeviceKind, SupportTier>> = {
  'nasal-cannula': 'conventional-oxygen',
  'simple-face-mask': 'conventional-oxygen',
  'venturi-mask': 'conventional-oxygen',
  'reservoir-mask': 'conventional-oxygen',
  'tracheostomy-mask': 'conventional-oxygen',
  'high-flow-nasal-cannula': 'high-flow',
  'cpap-niv': 'pressure-support',
};

/** The support tier a device kind belongs to. */
export function deviceTier(kind: DeviceKind): SupportTier {
  return TIER_OF_DEVICE[kind];
}

/** 0 for conventional oxygen, rising with the level of support. */
export function tierRank(tier: SupportTier): number {
  return SUPPORT_TIERS.indexOf(tier);
}

/** The highest of some tiers; undefined when there are none. */
export function highestTier(tiers: readonly (SupportTier | undefined)[]): SupportTier | undefined {
  let best: SupportTier | undefined;
  for (const tier of tiers) {
    if (tier !== undefined && (best === undefined || tierRank(tier) > tierRank(best))) {
      best = tier;
    }
  }
  return best;
}

/** True when moving to `offered` would put a patient on `current` support on a lower tier. */
export function isLowerTier(offered: DeviceKind, current: SupportTier | undefined): boolean {
  return current !== undefined && tierRank(deviceTier(offered)) < tierRank(current);
}

/** Worked out once when the module loads: the device models are fixed. */
const CONVENTIONAL_FLOW_CEILING_L_PER_MIN = Math.max(
  ...Object.values(DEVICE_MODELS)
    .filter((model) => deviceTier(model.kind) === 'conventional-oxygen')
    .map((model) => model.flowRangeLPerMin.max),
);

/**
 * The highest O2 flow any conventional device is run at in adults (the top of each model's usual
 * range; a Venturi's 60 % setting raised by half for tachypnoea, 22.5 L/min, is the largest).
 */
export function conventionalFlowCeilingLPerMin(): number {
  return CONVENTIONAL_FLOW_CEILING_L_PER_MIN;
}

/**
 * What a recorded O2 flow (LOINC 3151-8, which names no device) shows about the support tier: a flow
 * above every conventional device's range can only be high flow; any other flow could be any device,
 * so it shows nothing. A CPAP or NIV bleed-in is never that large either.
 */
export function tierShownByRecordedFlow(flowLPerMin: number): SupportTier | undefined {
  return flowLPerMin > conventionalFlowCeilingLPerMin() ? 'high-flow' : undefined;
}
