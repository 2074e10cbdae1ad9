import type { DeviceKind, OxygenOrder } from '../../../src/core/types.js';
import type { FhirResource } from '../../../src/fhir/gathered-data.js';
import { oxygenOrderType } from '../../../src/fhir/is-oxygen-order.js';
import { readOrder } from '../../../src/fhir/read-order.js';

/**
 * How much oxygen (and support) an order gives, so a test can tell whether a suggestion steps it
 * up or down. Read through the service's own order reader, then ranked by our own scale.
 *
 * Device tiers, lowest to highest:
 *  1. nasal cannula, simple face mask, Venturi mask, tracheostomy mask: ward devices giving FiO2 up
 *     to about 0.6 (check-values.md §2a: BTS 2017 Tables 2 and 4; Therapeutic Guidelines);
 *  2. reservoir (non-rebreathing) mask: FiO2 about 0.6–0.9 at 15 L/min, the top of ward oxygen for
 *     SpO2 < 85 % (BTS 2017 Table 2);
 *  3. high-flow nasal cannula: FiO2 up to 1.0 at flows that meet the patient's inspiratory demand
 *     (check-values.md §2a, Annual Update in ICEM 2017);
 *  4. CPAP or NIV: positive pressure, the step beyond high flow (BTS/ICS 2016).
 * Each step up supplies more oxygen or adds support the step below cannot, so moving down a tier
 * while the patient needs it withdraws support. One exception is written into the properties, not
 * the tiers: BTS 2017 Table 4 moves a patient on the 88–92 % range from an uncontrolled reservoir
 * mask to a controlled Venturi mask, which is a change of control, safe only at or above target.
 */

export const DEVICE_TIER: Readonly<Record<DeviceKind, number>> = {
  'nasal-cannula': 1,
  'simple-face-mask': 1,
  'venturi-mask': 1,
  'tracheostomy-mask': 1,
  'reservoir-mask': 2,
  'high-flow-nasal-cannula': 3,
  'cpap-niv': 4,
};

/**
 * A nominal FiO2 for comparing two tier-1 settings: nasal cannula 0.20 + 0.04 × L/min ("rule of 4",
 * check-values.md §2a, common practice); simple face mask 0.35 at 5 L/min to 0.60 at 10 L/min
 * (Therapeutic Guidelines, check-values.md §2a); otherwise the set FiO2. Undefined when not known.
 */
function nominalFio2(order: OxygenOrder): number | undefined {
  if (order.setFio2Fraction !== undefined) return order.setFio2Fraction;
  const flow = order.flowLPerMin;
  if (flow === undefined) return undefined;
  if (order.device === 'nasal-cannula') return 0.2 + 0.04 * Math.min(flow, 6);
  if (order.device === 'simple-face-mask') return 0.35 + 0.05 * (Math.min(Math.max(flow, 5), 10) - 5);
  return undefined;
}

export type OxygenStep = 'less' | 'same' | 'more' | 'unknown';

/** Compares the oxygen an order gives after a change with before it. */
export function compareOxygen(before: OxygenOrder, after: OxygenOrder): OxygenStep {
  // An order ended (a stop suggestion on patient-view) gives no oxygen at all (FHIR R4 request status).
  const ended = (o: OxygenOrder): boolean => o.status === 'stopped' || o.status === 'completed' || o.status === 'revoked';
  if (ended(after) !== ended(before)) return ended(after) ? 'less' : 'more';
  if (before.device === undefined || after.device === undefined) return 'unknown';
  const tierBefore = DEVICE_TIER[before.device];
  const tierAfter = DEVICE_TIER[after.device];
  if (tierAfter !== tierBefore) return tierAfter > tierBefore ? 'more' : 'less';
  if (before.device === after.device) {
    const flowStep = sign(before.flowLPerMin, after.flowLPerMin);
    const fio2Step = sign(before.setFio2Fraction, after.setFio2Fraction);
    if (flowStep === 'less' || fio2Step === 'less') return 'less';
    if (flowStep === 'more' || fio2Step === 'more') return 'more';
    return 'same';
  }
  const a = nominalFio2(before);
  const b = nominalFio2(after);
  if (a === undefined || b === undefined) return 'unknown';
  // Two tier-1 devices within 0.02 of each other give the same oxygen, as far as anyone can say.
  return Math.abs(b - a) <= 0.02 ? 'same' : b > a ? 'more' : 'less';
}

function sign(before: number | undefined, after: number | undefined): OxygenStep {
  if (before === undefined || after === undefined || before === after) return 'same';
  return after > before ? 'more' : 'less';
}

/** Reads an order resource as the service does; undefined when it is not an oxygen order. */
export function readOxygenOrder(resource: FhirResource): OxygenOrder | undefined {
  const type = oxygenOrderType(resource);
  if (type === undefined) return undefined;
  return readOrder(resource, type, `${resource.resourceType}/${String(resource.id)}`, true).order;
}
