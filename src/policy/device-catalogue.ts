import type { DeviceCatalogue, FlowLimitsLPerMin, StockedVenturiSetting } from '../core/policy.js';
import { FLOW_LIMITED_DEVICE_KINDS, type FlowLimitedDeviceKind } from '../core/devices/catalogue.js';
import type { PolicyCheck } from './check-policy.js';
import type { DevicesSection } from './schema.js';

/** The `devices` section as the core reads it: Venturi settings as fractions, ascending. Pure. */
export function toDeviceCatalogue(section: DevicesSection): DeviceCatalogue {
  const flowLimits: Partial<Record<FlowLimitedDeviceKind, FlowLimitsLPerMin>> = {};
  for (const kind of FLOW_LIMITED_DEVICE_KINDS) {
    const stocked = section[kind];
    if (stocked !== undefined) {
      flowLimits[kind] = { from: stocked.flowLPerMin.from, to: stocked.flowLPerMin.to };
    }
  }
  const venturiSettings: StockedVenturiSetting[] = (section['venturi-mask']?.settings ?? [])
    // Percent to fraction without binary noise: 28 % is 0.28, as the standard settings are written.
    .map((v) => ({ fio2Fraction: Math.round(v.fio2Percent * 10) / 1000, minimumFlowLPerMin: v.minimumFlowLPerMin }))
    .sort((a, b) => a.fio2Fraction - b.fio2Fraction);
  return { flowLimits, venturiSettings };
}

/** How far a stocked device's flow limits may reach, and what is said when they reach further. */
interface FlowBound {
  readonly litres: number;
  readonly level: 'error' | 'warning';
  /** Why, in the committee's terms, with the source. */
  readonly reason: string;
}

/**
 * What each device allows, beyond which the hospital's limits are refused (error: the device harms or
 * fails there) or queried (warning: outside the published range the model's FiO2 figures rest on).
 */
const FLOW_BOUNDS: Readonly<Record<FlowLimitedDeviceKind, { readonly below: FlowBound; readonly above: FlowBound }>> = {
  'nasal-cannula': {
    below: { litres: 1, level: 'warning', reason: 'BTS 2017 (Tables 2 and 4) runs nasal cannulae from 1 L/min, and the FiO2 figures the model holds start there' },
    above: {
      litres: 6,
      level: 'error',
      reason:
        'above 6 L/min a nasal cannula dries the nose and is poorly tolerated for little more oxygen, and its published FiO2 figures stop at 6 L/min (BTS 2017 Tables 2 and 4)',
    },
  },
  'simple-face-mask': {
    below: {
      litres: 5,
      level: 'error',
      reason: 'below 5 L/min a simple face mask rebreathes exhaled gas: minute ventilation rose by about 40 % at 3 L/min (Jensen et al. 1991)',
    },
    above: { litres: 10, level: 'warning', reason: 'BTS 2017 (Table 2) runs a simple face mask at 5–10 L/min' },
  },
  'reservoir-mask': {
    below: {
      litres: 10,
      level: 'error',
      reason: 'below 10 L/min the reservoir bag is not kept full and the mask no longer gives a high concentration (BTS 2008: 10–15 L/min; BTS 2017 Table 2: 15 L/min)',
    },
    above: { litres: 15, level: 'warning', reason: 'BTS 2017 (Table 2) runs a reservoir mask at 15 L/min' },
  },
  'tracheostomy-mask': {
    below: { litres: 5, level: 'warning', reason: 'the model runs a tracheostomy mask at 5–15 L/min (from memory)' },
    above: { litres: 15, level: 'warning', reason: 'the model runs a tracheostomy mask at 5–15 L/min (from memory)' },
  },
  'high-flow-nasal-cannula': {
    below: { litres: 10, level: 'warning', reason: 'the model runs high-flow nasal cannula at 10–60 L/min (adult devices up to 60 L/min, PMC5359952)' },
    above: { litres: 60, level: 'warning', reason: 'adult high-flow devices deliver up to 60 L/min (Annual Update in ICEM 2017, PMC5359952)' },
  },
  'cpap-niv': {
    below: { litres: 1, level: 'warning', reason: 'the model bleeds 1–15 L/min of oxygen into CPAP or NIV (from memory)' },
    above: { litres: 15, level: 'warning', reason: 'the model bleeds 1–15 L/min of oxygen into CPAP or NIV (from memory)' },
  },
};

/** The Venturi settings the model holds measured accuracy for (Jones 1984: 24–60 %), percent. */
const VENTURI_PERCENT = { from: 24, to: 60 } as const;

/** The usual printed minimums, for fix text (BTS 2017 Table 4 for 24 and 28 %; device labelling for the rest). */
const USUAL_MINIMUMS = '24 % 2, 28 % 4, 31 % 6, 35 % 8, 40 % 10, 60 % 15 L/min';

/** `thresholds.flowmeterMaxLPerMin`'s schema default: the top of a ward flowmeter (common practice). */
const FLOWMETER_MAX_DEFAULT_L_PER_MIN = 15;

function numberAt(value: unknown, key: string): number | undefined {
  if (value === null || typeof value !== 'object') return undefined;
  const found = (value as Record<string, unknown>)[key];
  return typeof found === 'number' && Number.isFinite(found) ? found : undefined;
}

function checkFlowLimits(devices: Record<string, unknown>, flowmeterMax: number, out: PolicyCheck[]): void {
  for (const kind of FLOW_LIMITED_DEVICE_KINDS) {
    const limits = (devices[kind] as Record<string, unknown> | undefined)?.['flowLPerMin'];
    const from = numberAt(limits, 'from');
    const to = numberAt(limits, 'to');
    const path = ['devices', kind, 'flowLPerMin'];
    if (from !== undefined && to !== undefined && from > to) {
      out.push({
        level: 'error',
        path,
        message: `the limits ${from}–${to} L/min are not ordered: from must not exceed to`,
        fix: 'swap the two limits, or correct the one that is wrong',
      });
    }
    const bounds = FLOW_BOUNDS[kind];
    if (from !== undefined && from < bounds.below.litres) {
      out.push({
        level: bounds.below.level,
        path: [...path, 'from'],
        message: `${kind} from ${from} L/min is below ${bounds.below.litres} L/min: ${bounds.below.reason}`,
        fix: `raise flowLPerMin.from to ${bounds.below.litres} L/min or more`,
      });
    }
    // A ward flowmeter gives only up to its top flow; high flow has its own flow source.
    const throughFlowmeter = kind !== 'high-flow-nasal-cannula';
    if (to !== undefined && throughFlowmeter && to > flowmeterMax) {
      out.push({
        level: 'error',
        path: [...path, 'to'],
        message: `${kind} up to ${to} L/min is more than a ward flowmeter gives (thresholds.flowmeterMaxLPerMin: ${flowmeterMax} L/min)`,
        fix: `lower flowLPerMin.to to ${Math.min(flowmeterMax, bounds.above.litres)} L/min or less`,
      });
    } else if (to !== undefined && to > bounds.above.litres) {
      out.push({
        level: bounds.above.level,
        path: [...path, 'to'],
        message: `${kind} up to ${to} L/min goes beyond ${bounds.above.litres} L/min: ${bounds.above.reason}`,
        fix: `lower flowLPerMin.to to ${bounds.above.litres} L/min or less`,
      });
    }
  }
}

interface Valve {
  readonly index: number;
  readonly percent: number;
  readonly minimum: number | undefined;
}

function checkVenturiValves(devices: Record<string, unknown>, flowmeterMax: number, out: PolicyCheck[]): void {
  const settings = (devices['venturi-mask'] as Record<string, unknown> | undefined)?.['settings'];
  if (!Array.isArray(settings)) return;
  const path = ['devices', 'venturi-mask', 'settings'];
  const valves: Valve[] = [];
  settings.forEach((item: unknown, index) => {
    const percent = numberAt(item, 'fio2Percent');
    if (percent === undefined) return;
    const minimum = numberAt(item, 'minimumFlowLPerMin');
    if (percent < VENTURI_PERCENT.from || percent > VENTURI_PERCENT.to) {
      out.push({
        level: 'error',
        path: [...path, index, 'fio2Percent'],
        message:
          `${percent} % is not a Venturi setting the model supports: valves run from ${VENTURI_PERCENT.from} % to ` +
          `${VENTURI_PERCENT.to} %, the span whose delivered FiO2 was measured (Jones 1984)`,
        fix: percent <= 1 ? `write the setting in percent as on the valve, e.g. ${Math.round(percent * 100)}` : `use a setting from ${VENTURI_PERCENT.from} to ${VENTURI_PERCENT.to} %`,
      });
      return;
    }
    const twin = valves.find((v) => Math.abs(v.percent - percent) < 0.5);
    if (twin !== undefined) {
      out.push({
        level: 'error',
        path: [...path, index],
        message: `the ${percent} % valve is listed twice (items ${twin.index + 1} and ${index + 1})`,
        fix: 'keep one entry, with the minimum flow printed on the valve the hospital buys',
      });
      return;
    }
    if (minimum !== undefined && minimum > flowmeterMax) {
      out.push({
        level: 'error',
        path: [...path, index, 'minimumFlowLPerMin'],
        message: `the ${percent} % valve needs ${minimum} L/min, more than a ward flowmeter gives (thresholds.flowmeterMaxLPerMin: ${flowmeterMax} L/min)`,
        fix: 'check the flow printed on the valve, or do not stock it',
      });
    }
    valves.push({ index, percent, minimum });
  });
  // Air-entrainment mass balance: O2 flow = total flow × (F − 0.21)/0.79, which rises with the setting
  // F, so a higher setting needs at least as much O2 to give the mask's total flow; every published
  // label table rises with the setting (BTS 2017 Table 4: 24 % 2, 28 % 4 L/min).
  for (const valve of valves) {
    if (valve.minimum === undefined) continue;
    const minimum = valve.minimum;
    const conflict = valves
      .filter((v) => v.percent < valve.percent && v.minimum !== undefined && v.minimum > minimum)
      .sort((a, b) => (b.minimum ?? 0) - (a.minimum ?? 0))[0];
    if (conflict === undefined) continue;
    out.push({
      level: 'error',
      path: [...path, valve.index, 'minimumFlowLPerMin'],
      message:
        `the ${valve.percent} % valve's minimum flow, ${minimum} L/min, is below the ${conflict.percent} % valve's ` +
        `${String(conflict.minimum)} L/min: a higher setting entrains less air per litre of oxygen, so it needs at ` +
        'least as much oxygen flow (air-entrainment mass balance: O2 flow = total flow × (F − 0.21)/0.79)',
      fix: `check the flows printed on the valves; the usual minimums rise with the setting: ${USUAL_MINIMUMS}`,
    });
  }
}

function checkStock(devices: Record<string, unknown>, out: PolicyCheck[]): void {
  if (devices['reservoir-mask'] === undefined) {
    out.push({
      level: 'warning',
      path: ['devices'],
      message:
        'no reservoir mask is stocked: cards for an SpO2 below thresholds.criticalSpo2BelowPercent offer no device ' +
        '(BTS 2017 Table 2: a reservoir mask at 15 L/min)',
      fix: 'add reservoir-mask with its flow limits, unless the hospital has decided otherwise',
    });
  }
  const settings = (devices['venturi-mask'] as Record<string, unknown> | undefined)?.['settings'];
  const percents = Array.isArray(settings) ? settings.map((s: unknown) => numberAt(s, 'fio2Percent')) : [];
  if (!percents.includes(24) && !percents.includes(28)) {
    out.push({
      level: 'warning',
      path: Array.isArray(settings) ? ['devices', 'venturi-mask'] : ['devices'],
      message:
        'no 24 % or 28 % Venturi valve is stocked: cards for patients at risk of hypercapnia on uncontrolled oxygen ' +
        'offer no one-click controlled device (BTS 2017 Table 4 advises 24 % at 2–3 L/min or 28 % at 4 L/min)',
      fix: 'stock a 24 % or 28 % valve, or accept that those cards advise in words only',
    });
  }
}

/**
 * The device catalogue's checks beyond the schema: flow limits ordered and inside what each device
 * allows, Venturi settings the model supports, no valve twice, minimum flows rising with the setting,
 * and the devices the advice relies on stocked. Reads the raw document defensively, as check-policy
 * does; a file without a `devices` section takes the built-in catalogue and is not checked here.
 */
export function checkDeviceCatalogue(raw: unknown, out: PolicyCheck[]): void {
  if (raw === null || typeof raw !== 'object') return;
  const devices = (raw as Record<string, unknown>)['devices'];
  if (devices === null || typeof devices !== 'object' || Array.isArray(devices)) return;
  const flowmeterMax = numberAt((raw as Record<string, unknown>)['thresholds'], 'flowmeterMaxLPerMin') ?? FLOWMETER_MAX_DEFAULT_L_PER_MIN;
  const section = devices as Record<string, unknown>;
  checkFlowLimits(section, flowmeterMax, out);
  checkVenturiValves(section, flowmeterMax, out);
  checkStock(section, out);
}
