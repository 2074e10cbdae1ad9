import { formatFlow, formatNumber } from '../assessment/format.js';
import type { Assessment } from '../assessment/types.js';
import { BUILT_IN_DEVICE_CATALOGUE, flowRangeFor, stockedVenturiSettings } from '../devices/catalogue.js';
import { findVenturiSetting } from '../devices/venturi-mask.js';
import type { DeviceCatalogue } from '../policy.js';
import type { OxygenOrder } from '../types.js';

/**
 * What a card says the next step is when it offers no one-click change, in bedside terms: the device
 * and flow to go to, not the reason the service holds back. Pure. The words follow the device and
 * flow ranges the service already holds (BTS 2017 Table 2: nasal cannulae 2–6 L/min, simple face mask
 * 5–10 L/min; Jensen 1991: not below 5 L/min on a simple mask; BTS 2017 Table 4 and device labelling:
 * Venturi settings and their flows); the order of weaning (reservoir mask to a lower-concentration
 * device, never straight to air; high flow by FiO2 first) is BTS 2017 weaning advice and common
 * practice, from memory.
 *
 * Called only where the bar to a one-click change is the device or a hypercapnic acidosis, never for a
 * falling patient, a rising need or an order that is not a titration: those cards name only why there
 * is no change.
 */
/** Bedside words for a patient with hypercapnic acidosis on the current gas, or undefined without one. */
export function hypercapnicAcidosisAdvice(assessment: Assessment): string | undefined {
  const hypercapnia = assessment.hypercapnicRisk.classification;
  if (hypercapnia.acidaemic === true && (hypercapnia.kind === 'acute' || hypercapnia.kind === 'acute-on-chronic')) {
    // BTS 2017 (from memory): never stop oxygen suddenly in hypercapnia (rebound hypoxaemia); BTS/ICS
    // 2016: pH < 7.35 with a raised PaCO2 despite treatment, consider NIV.
    return (
      'Do not stop the oxygen (sudden withdrawal may cause rebound hypoxaemia). Review the hypercapnic ' +
      'acidosis now (consider NIV) and, with the team, bring SpO2 back into the range by lowering the oxygen a little'
    );
  }
  return undefined;
}

/**
 * Bedside words for the next step on a device the service offers no one-click change for. Flows are
 * the hospital's limits and the lower Venturi setting is a valve it stocks (policy `devices`).
 */
export function deviceStepAdvice(order: OxygenOrder, catalogue: DeviceCatalogue = BUILT_IN_DEVICE_CATALOGUE): string | undefined {
  const cannula = flowRangeFor(catalogue, 'nasal-cannula');
  const mask = flowRangeFor(catalogue, 'simple-face-mask');
  const valves = stockedVenturiSettings(catalogue);
  switch (order.device) {
    case 'reservoir-mask':
      return (
        `Consider changing the reservoir mask to nasal cannulae at 2–${formatNumber(cannula.max, 0)} L/min ` +
        `or a simple face mask at ${formatNumber(mask.min, 0)}–${formatNumber(mask.max, 0)} L/min, one step, ` +
        'and rechecking SpO2; not straight to air'
      );
    case 'simple-face-mask':
      return (
        `Consider lowering the mask flow (not below ${formatFlow(mask.min)}: rebreathing) or changing to ` +
        'nasal cannulae at 2–4 L/min, and rechecking SpO2; not straight to air'
      );
    case 'venturi-mask': {
      const setting = order.setFio2Fraction === undefined ? undefined : findVenturiSetting(order.setFio2Fraction, valves);
      const lower = setting === undefined ? undefined : [...valves].reverse().find((s) => s.fio2Fraction < setting.fio2Fraction);
      return lower === undefined
        ? 'Consider the next lower Venturi setting and rechecking SpO2'
        : `Consider the next lower Venturi setting, ${formatNumber(lower.fio2Fraction * 100, 0)} % at ` +
            `${formatFlow(lower.minimumFlowLPerMin)} or more (the flow on its label), and rechecking SpO2`;
    }
    case 'high-flow-nasal-cannula':
      return 'Consider lowering the FiO2 first, in small steps with the flow unchanged, and rechecking SpO2, with the team';
    case 'cpap-niv':
      return 'Consider lowering the oxygen added to the CPAP/NIV, with the team, and rechecking SpO2';
    case 'nasal-cannula':
      // Only reached when the cannula runs above its range (a step inside the range is one click).
      return (
        `Consider bringing the cannula within its ${formatNumber(cannula.min, 0)}–${formatNumber(cannula.max, 0)} L/min ` +
        `range (${formatFlow(cannula.max)} or less) and rechecking SpO2`
      );
    case 'tracheostomy-mask':
    case undefined:
      return undefined;
  }
}
