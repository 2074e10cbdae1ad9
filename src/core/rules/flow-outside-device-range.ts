import { formatFlow, formatNumber } from '../assessment/format.js';
import { DEVICE_MODELS } from '../devices/index.js';
import type { DeviceKind, Finding, OrderChange } from '../types.js';
import { describeOrder } from './support/describe.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/** Venturi flows depend on the setting, which `venturi-flow-insufficient` checks. */
const CHECKED_ELSEWHERE: readonly DeviceKind[] = ['venturi-mask'];

/** Masks whose FiO2 rises with flow: raising the flow of one in a CO2 retainer is not a safe default. */
const VARIABLE_MASKS: readonly DeviceKind[] = ['simple-face-mask', 'reservoir-mask'];

/**
 * The ordered flow is outside the device model's usual adult range (`DeviceModel.flowRangeLPerMin`).
 *
 * Rationale: below its range a mask rebreathes exhaled gas (a simple face mask under 5 L/min raised
 * minute ventilation by about 40 % in Jensen 1991) and a reservoir bag collapses; above it, nasal
 * cannulae dry and hurt without adding much oxygen (BTS 2017). Warning. Suggests the lowest flow of
 * the range when the flow is below it, except for a mask in a patient at risk of hypercapnia (more
 * flow means more oxygen there; a controlled device is the usual answer). Above the range no change
 * is offered: lowering the flow would lower the oxygen given.
 * Sources: BTS 2017 Tables 2 and 4 (ranges); Jensen et al. 1991 (simple face mask minimum).
 */
export const rule: Rule = {
  id: 'flow-outside-device-range',
  title: 'Flow outside the device range',
  version: 1,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'warning',
  evaluate: ({ assessment }): readonly Finding[] => {
    const { order, hypercapnicRisk } = assessment;
    const flow = order?.flowLPerMin;
    if (order === undefined || order.device === undefined || flow === undefined || CHECKED_ELSEWHERE.includes(order.device)) {
      return [];
    }
    const model = DEVICE_MODELS[order.device];
    const { min, max } = model.flowRangeLPerMin;
    if (flow >= min && flow <= max) {
      return [];
    }
    const below = flow < min;
    const unsafeToRaise = hypercapnicRisk.atRisk && VARIABLE_MASKS.includes(order.device);
    const change: OrderChange | undefined = below && !unsafeToRaise ? { kind: 'set-flow', flowLPerMin: min } : undefined;
    return [
      makeFinding(rule, {
        orderReference: order.reference,
        values: {
          orderDescription: describeOrder(order),
          deviceLabel: model.label,
          orderedFlow: formatFlow(flow),
          deviceRange: `${formatNumber(min, 1)}–${formatFlow(max)}`,
          direction: below ? 'below' : 'above',
          ...(change?.kind === 'set-flow' ? { suggestedFlow: formatFlow(change.flowLPerMin) } : {}),
        },
        sourceKeys: order.device === 'simple-face-mask' && below ? ['bts-2017', 'jensen-1991'] : ['bts-2017'],
        ...(change === undefined ? {} : { change }),
      }),
    ];
  },
};
