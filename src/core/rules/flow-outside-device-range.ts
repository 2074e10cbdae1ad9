import { formatFlow, formatNumber } from '../assessment/format.js';
import { flowRangeFor } from '../devices/catalogue.js';
import { DEVICE_MODELS } from '../devices/index.js';
import type { DeviceKind, Finding, OrderChange } from '../types.js';
import { describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import { givesOxygen, isTitration } from './support/order-purpose.js';
import type { Rule } from './support/rule-types.js';

/** Venturi flows depend on the setting, which `venturi-flow-insufficient` checks. */
const CHECKED_ELSEWHERE: readonly DeviceKind[] = ['venturi-mask'];

/** Masks whose FiO2 rises with flow: raising the flow of one in a CO2 retainer is not a safe default. */
const VARIABLE_MASKS: readonly DeviceKind[] = ['simple-face-mask', 'reservoir-mask'];

/**
 * Why a flow outside the range matters, for this device and side only: rebreathing is a mask's
 * problem, never a nasal cannula's.
 */
function concernFor(device: DeviceKind, below: boolean): string {
  if (below && device === 'simple-face-mask') {
    // Jensen et al. 1991 (verified): minute ventilation about 140 % of baseline at 3 L/min.
    return 'Below its range a simple face mask rebreathes exhaled gas: at 3 L/min, minute ventilation rose by about 40 % in one study (Jensen et al. 1991).';
  }
  if (below && device === 'reservoir-mask') {
    return 'Below its range the reservoir bag is not kept full, and the mask no longer gives a high concentration.';
  }
  if (!below && device === 'nasal-cannula') {
    // BTS 2017 (verified): nasal cannulae above about 4 L/min are often poorly tolerated.
    return 'Above its range, nasal cannulae dry the nose and are poorly tolerated for little extra oxygen.';
  }
  return `This flow is ${below ? 'below' : 'above'} the flows the device is usually run at in adults; check that it is intended.`;
}

/**
 * The ordered flow is outside the hospital's flow limits for the device (policy `devices`), or, for a
 * device the hospital does not stock, the device model's usual adult range (`DeviceModel.flowRangeLPerMin`).
 * The policy checks keep the hospital's limits inside what each device allows (device-catalogue.ts).
 *
 * Rationale: below its range a mask rebreathes exhaled gas (a simple face mask under 5 L/min raised
 * minute ventilation by about 40 % in Jensen 1991) and a reservoir bag collapses; above it, nasal
 * cannulae dry and hurt without adding much oxygen (BTS 2017). Warning. Suggests the lowest flow of
 * the range when the flow is below it, except for a mask in a patient at risk of hypercapnia (more
 * flow means more oxygen there; a controlled device is the usual answer). Above the range no change
 * is offered: lowering the flow would lower the oxygen given. Silent for stop and room-air orders
 * and 0 L/min; comfort and weaning orders get the card but no raised flow (`isTitration`).
 * Sources: BTS 2017 Tables 2 and 4 (ranges); Jensen et al. 1991 (simple face mask minimum).
 */
export const rule: Rule = {
  id: 'flow-outside-device-range',
  title: 'Flow outside the device range',
  version: 3,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment, policy }): readonly Finding[] => {
    const { order, hypercapnicRisk } = assessment;
    const flow = order?.flowLPerMin;
    if (order === undefined || order.device === undefined || flow === undefined || CHECKED_ELSEWHERE.includes(order.device)) {
      return [];
    }
    const model = DEVICE_MODELS[order.device];
    const { min, max } = flowRangeFor(policy.devices, order.device);
    if (flow >= min && flow <= max) {
      return [];
    }
    // A stop or room-air order (or 0 L/min) gives no oxygen: its device and flow are moot.
    if (!givesOxygen(order)) {
      return [];
    }
    const below = flow < min;
    const unsafeToRaise = hypercapnicRisk.atRisk && VARIABLE_MASKS.includes(order.device);
    // Comfort and weaning orders are not titrations: the card stays, the flow is never raised.
    const change: OrderChange | undefined =
      below && !unsafeToRaise && isTitration(order) ? { kind: 'set-flow', flowLPerMin: min } : undefined;
    return [
      makeFinding(rule, {
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          deviceLabel: model.label,
          orderedFlow: formatFlow(flow),
          deviceRange: `${formatNumber(min, 1)}–${formatFlow(max)}`,
          direction: below ? 'below' : 'above',
          concern: concernFor(order.device, below),
          ...(change?.kind === 'set-flow' ? { suggestedFlow: formatFlow(change.flowLPerMin) } : {}),
        },
        sourceKeys: order.device === 'simple-face-mask' && below ? ['bts-2017', 'jensen-1991'] : ['bts-2017'],
        ...(change === undefined ? {} : { change }),
      }),
    ];
  },
};
