import type { Outcome } from '../types.js';
import { checkDeliveryInput, flowRangeNotes, formatNumber } from './check-input.js';
import type { InputSpec } from './check-input.js';
import {
  TACHYPNOEA_RESP_RATE_ABOVE_PER_MIN,
  demandNotes,
  estimateInspiratoryDemand,
  peakInspiratoryFlowLPerMin,
} from './inspiratory-demand.js';
import { ESTIMATE_ONLY_NOTE, ROOM_AIR_O2_FRACTION, fio2Range, openSourceFio2 } from './mixing.js';
import { DEVICE_FIO2_TABLES_KEY, buildDeliveryEstimate } from './delivery-estimate.js';
import type { DeliveryEstimate, DeliveryInput, DeviceModel, Fio2Envelope } from './types.js';

export interface VenturiSetting {
  readonly fio2Fraction: number;
  /** The least O2 flow at which the adaptor entrains as labelled, L/min. */
  readonly minimumFlowLPerMin: number;
  readonly minimumFlowBasis: string;
}

/**
 * Standard Venturi settings and their minimum O2 flows: 24 % 2 and 28 % 4 L/min (BTS 2017, Table 4);
 * 31/35/40/60 % at 6/8/10/15 L/min (device labelling convention, common practice); 50 % at
 * 12 L/min (from memory: between the 40 % and 60 % minimums, as on the kits that carry it).
 */
export const VENTURI_SETTINGS: readonly VenturiSetting[] = [
  { fio2Fraction: 0.24, minimumFlowLPerMin: 2, minimumFlowBasis: 'BTS 2017' },
  { fio2Fraction: 0.28, minimumFlowLPerMin: 4, minimumFlowBasis: 'BTS 2017' },
  { fio2Fraction: 0.31, minimumFlowLPerMin: 6, minimumFlowBasis: 'common practice' },
  { fio2Fraction: 0.35, minimumFlowLPerMin: 8, minimumFlowBasis: 'common practice' },
  { fio2Fraction: 0.4, minimumFlowLPerMin: 10, minimumFlowBasis: 'common practice' },
  { fio2Fraction: 0.5, minimumFlowLPerMin: 12, minimumFlowBasis: 'from memory' },
  { fio2Fraction: 0.6, minimumFlowLPerMin: 15, minimumFlowBasis: 'common practice' },
];

/** A set FiO2 within this of a standard setting is that setting (absorbs 28 % → 0.28 rounding). */
export const VENTURI_SETTING_MATCH_TOLERANCE = 0.005;

/** Measured FiO2 at the 24-40 % settings was within 1.9 % absolute of nominal (Jones 1984). */
export const VENTURI_ACCURACY_FRACTION = 0.019;

/** The 60 % setting measured 50.3 % at rest (Jones 1984); applied to every setting above 40 %. */
export const VENTURI_HIGH_SETTING_SHORTFALL_FRACTION = 0.097;

/** Breathing faster than 30/min: raise the O2 flow to 1.5 × the minimum (BTS 2017, Table 4). */
export const VENTURI_TACHYPNOEA_FLOW_MULTIPLIER = 1.5;

/** 1.5 × the 60 % setting's 15 L/min minimum: the highest flow BTS 2017 Table 4 calls for. */
export const VENTURI_FLOW_RANGE_L_PER_MIN = { min: 2, max: 22.5 } as const;

/**
 * Air entrained per volume of oxygen: (1 − F)/(F − 0.21) (mass balance). It uses 0.21, not the
 * 0.20 some teaching uses (check-values pitfall 4): 28 % → 10.3, 60 % → 1.03.
 */
export function entrainmentRatio(settingFraction: number): number {
  return (1 - settingFraction) / (settingFraction - ROOM_AIR_O2_FRACTION);
}

/** Total gas flow leaving the mask, L/min: Q_O2 × (1 + ratio). 28 % at 4 L/min → 45.1. */
export function venturiTotalFlowLPerMin(o2FlowLPerMin: number, settingFraction: number): number {
  return o2FlowLPerMin * (1 + entrainmentRatio(settingFraction));
}

/**
 * The setting matching `fio2Fraction`: from `stocked` (the hospital's valves, whose printed minimum
 * flows win) when one matches, else from the standard settings.
 */
export function findVenturiSetting(
  fio2Fraction: number,
  stocked: readonly VenturiSetting[] = [],
): VenturiSetting | undefined {
  const matches = (s: VenturiSetting): boolean => Math.abs(s.fio2Fraction - fio2Fraction) <= VENTURI_SETTING_MATCH_TOLERANCE;
  return stocked.find(matches) ?? VENTURI_SETTINGS.find(matches);
}

const percent = (fraction: number): string => `${formatNumber(fraction * 100)} %`;

/**
 * The Venturi envelope: the setting less its measured shortfall to the setting plus the 1.9 %
 * accuracy (Jones 1984). Below the setting's minimum O2 flow entrainment is not assured and nothing
 * is published, so the envelope runs from room air to the setting plus its accuracy.
 */
export function venturiEnvelope(setting: VenturiSetting, o2FlowLPerMin: number): Fio2Envelope {
  const f = setting.fio2Fraction;
  const shortfall = f > 0.4 ? VENTURI_HIGH_SETTING_SHORTFALL_FRACTION : VENTURI_ACCURACY_FRACTION;
  const below = o2FlowLPerMin < setting.minimumFlowLPerMin;
  return {
    low: below ? ROOM_AIR_O2_FRACTION : f - shortfall,
    high: Math.min(1, f + VENTURI_ACCURACY_FRACTION),
    basis: below
      ? `Venturi ${percent(f)} below its ${formatNumber(setting.minimumFlowLPerMin)} L/min minimum: from room air up to the setting + 1.9 % (Jones 1984)`
      : f > 0.4
        ? `Venturi ${percent(f)}: the 60 % setting measured 50.3 %, and the others within 1.9 % of the setting (Jones 1984)`
        : `Venturi ${percent(f)} within 1.9 % of the setting (Jones 1984)`,
    sourceKey: DEVICE_FIO2_TABLES_KEY,
  };
}

const SPEC: InputSpec = {
  deviceWords: 'a Venturi mask',
  uses: ['flowLPerMin', 'setFio2Fraction'],
  requires: ['setFio2Fraction', 'flowLPerMin'],
};


/**
 * Venturi (air-entrainment) mask. Fixed performance only while the O2 flow is at least the setting's
 * minimum and the total flow meets the central peak inspiratory flow; otherwise room air is drawn in
 * at the peak of each breath ({@link openSourceFio2}) and the range widens downward to what the
 * high-demand pattern gives. A non-standard setting is `unknown`: guessing the nearest setting
 * would guess its ratio and minimum flow too.
 */
export function estimateVenturiMask(input: DeliveryInput): Outcome<DeliveryEstimate> {
  const checked = checkDeliveryInput(input, SPEC);
  if (checked.kind !== 'ok') {
    return checked;
  }
  const flow = checked.value.flowLPerMin ?? 0;
  const requested = checked.value.setFio2Fraction ?? ROOM_AIR_O2_FRACTION;
  const setting = findVenturiSetting(requested, input.venturiSettings);
  if (setting === undefined) {
    return {
      kind: 'unknown',
      reason:
        `${percent(requested)} is not a standard Venturi setting ` +
        `(${VENTURI_SETTINGS.map((s) => formatNumber(s.fio2Fraction * 100)).join(', ')} %): ` +
        'its entrainment ratio and minimum flow are not known.',
    };
  }
  const f = setting.fio2Fraction;
  const ratio = entrainmentRatio(f);
  const total = venturiTotalFlowLPerMin(flow, f);
  const demand = estimateInspiratoryDemand(checked.value.respRatePerMin);
  const peak = demand.peakFlowLPerMin;
  const belowMinimum = flow < setting.minimumFlowLPerMin;
  const fixedPerformance = !belowMinimum && total >= peak;
  const shortfall = f > 0.4 ? VENTURI_HIGH_SETTING_SHORTFALL_FRACTION : VENTURI_ACCURACY_FRACTION;
  // The raw model range; the envelope then keeps it within the setting's measured accuracy.
  const fio2 = fio2Range(
    openSourceFio2(f, total, peak),
    Math.min(f - shortfall, openSourceFio2(f, total, peakInspiratoryFlowLPerMin(demand.highDemand))),
    f + VENTURI_ACCURACY_FRACTION,
  );

  const notes: string[] = [];
  if (fixedPerformance) {
    notes.push(
      `Total flow ${formatNumber(total)} L/min meets the estimated peak inspiratory flow of ` +
        `${formatNumber(peak)} L/min, so the mask performs as set (mixing model); measured 24-40 % ` +
        'settings were within 1.9 % of nominal (Jones 1984).',
    );
  } else {
    notes.push(ESTIMATE_ONLY_NOTE);
    if (total < peak) {
      notes.push(
        `Total flow ${formatNumber(total)} L/min is below the estimated peak inspiratory flow of ` +
          `${formatNumber(peak)} L/min: room air is drawn in and the FiO2 falls below the setting (mixing model).`,
      );
    }
  }
  if (belowMinimum) {
    notes.push(
      `${formatNumber(flow)} L/min is below the ${formatNumber(setting.minimumFlowLPerMin)} L/min minimum ` +
        `for the ${percent(f)} setting (${setting.minimumFlowBasis}): entrainment is not assured; estimated anyway.`,
    );
  } else {
    notes.push(...flowRangeNotes(flow, VENTURI_FLOW_RANGE_L_PER_MIN, 'a Venturi mask', 'BTS 2017'));
  }
  if (f > 0.4) {
    notes.push(
      'Settings above 40 % may deliver less than set: the 60 % setting measured only 50.3 % at rest (Jones 1984).',
    );
  }
  notes.push(...demandNotes(demand));
  if (demand.tachypnoea) {
    const raised = VENTURI_TACHYPNOEA_FLOW_MULTIPLIER * setting.minimumFlowLPerMin;
    const allowance = `${formatNumber(VENTURI_TACHYPNOEA_FLOW_MULTIPLIER)} × the minimum, ${formatNumber(raised)} L/min`;
    notes.push(
      flow < raised
        ? `Breathing faster than ${TACHYPNOEA_RESP_RATE_ABOVE_PER_MIN}/min: raise the O2 flow to ${allowance}, ` +
            'and keep the setting (BTS 2017, Table 4; Jones 1984).'
        : `Breathing faster than ${TACHYPNOEA_RESP_RATE_ABOVE_PER_MIN}/min: the flow already meets ${allowance} ` +
            '(BTS 2017, Table 4), but fast breathing can still outdraw the mask (Jones 1984).',
    );
  }
  return {
    kind: 'ok',
    value: buildDeliveryEstimate({
      raw: fio2,
      envelope: venturiEnvelope(setting, flow),
      model: 'air-entrainment',
      // At or above its minimum flow a Venturi mask delivers its setting; below it, only an estimate.
      fio2Source: belowMinimum ? 'estimated' : 'set',
      setFio2Fraction: f,
      respRatePerMin: checked.value.respRatePerMin,
      fixedPerformance,
      totalFlowLPerMin: total,
      peakInspiratoryFlowLPerMin: peak,
      entrainmentRatio: ratio,
      minimumFlowLPerMin: setting.minimumFlowLPerMin,
      notes,
      sourceKeys: ['bts-2017', 'jones-1984'],
    }),
  };
}

export const venturiMaskModel: DeviceModel = {
  kind: 'venturi-mask',
  label: 'Venturi mask',
  flowRangeLPerMin: VENTURI_FLOW_RANGE_L_PER_MIN,
  estimate: estimateVenturiMask,
};
