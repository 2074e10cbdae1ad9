import { oncePerObject } from '../once-per-object.js';
import { stockedVenturiSettings } from '../devices/catalogue.js';
import { deliveryInput, estimateDelivery } from '../devices/index.js';
import type { DeliveryEstimate } from '../devices/types.js';
import type { VenturiSetting } from '../devices/venturi-mask.js';
import { siteBarometricPressureMmHg } from '../physiology/index.js';
import type { Policy } from '../policy.js';
import type { Facts, Outcome, OxygenOrder } from '../types.js';
import {
  computeGasInterpretation,
  computeOxygenContent,
  computeRox,
  computeSfRatio,
  highFlowAtReading,
} from './bedside-physiology.js';
import { newestFirst, pickCurrentValues } from './current-values.js';
import { deliveryAtRecordedFlows, fio2InForceAt } from './fio2-in-force.js';
import { formatMmHg, formatNumber } from './format.js';
import { computeGasPhysiology } from './gas-physiology.js';
import { assessHypercapnicRisk } from './hypercapnic-risk.js';
import { assessPopulation } from './population.js';
import { compareOrderedTarget, selectTarget, selectTitrationTarget } from './target-selection.js';
import type { Assessment, BarometricPressureUsed, CurrentValues } from './types.js';
import type { UnitMatch } from './unit-targets.js';

/** Each site's pressure, worked out once: it depends on the policy's (frozen) site alone. */
const pressureOfSite = oncePerObject(workOutSitePressure);

/** The pressure the site uses: a measured or agreed policy value wins over the altitude model. */
export function siteBarometricPressure(policy: Policy): BarometricPressureUsed {
  return pressureOfSite(policy.site);
}

function workOutSitePressure(policySite: Policy['site']): BarometricPressureUsed {
  const configured = policySite.barometricPressureMmHg;
  if (configured !== undefined) {
    return {
      mmHg: configured,
      model: 'site-value',
      sourceKey: 'local-policy',
      computation: {
        name: 'Barometric pressure',
        formula: 'site pressure set in the local policy',
        substituted: policySite.name,
        result: formatMmHg(configured),
        sourceKey: 'local-policy',
      },
    };
  }
  const altitude = policySite.altitudeM;
  const site = siteBarometricPressureMmHg(altitude);
  const formula =
    site.model === 'isa-1993'
      ? 'PB = 760 × (1 − 2.25577×10⁻⁵ × h)^5.25588 (ICAO Standard Atmosphere, h in m)'
      : 'PB = exp(6.63268 − 0.1112 × h − 0.00149 × h²) (West 1996, h in km)';
  return {
    mmHg: site.mmHg,
    model: site.model,
    sourceKey: site.model,
    computation: {
      name: 'Barometric pressure',
      formula,
      substituted:
        site.model === 'isa-1993' ? `h = ${formatNumber(altitude, 0)} m` : `h = ${formatNumber(altitude / 1000, 2)} km`,
      result: formatMmHg(site.mmHg),
      sourceKey: site.model,
    },
  };
}

/**
 * The delivered-FiO2 estimate for the order's device and settings, at the current respiratory rate.
 * `venturiSettings`: the hospital's stocked valves (`stockedVenturiSettings(policy.devices)`), whose
 * printed minimum flows the Venturi model reads first.
 */
export function estimateOrderDelivery(
  order: OxygenOrder | undefined,
  current: CurrentValues,
  venturiSettings: readonly VenturiSetting[] = [],
): Outcome<DeliveryEstimate> {
  if (order === undefined) {
    return { kind: 'unknown', reason: 'no oxygen order to estimate' };
  }
  if (order.device === undefined) {
    return {
      kind: 'unknown',
      reason: `device not recognised${order.deviceText === undefined ? '' : `: '${order.deviceText}'`}`,
      missing: ['device'],
    };
  }
  return estimateDelivery(
    order.device,
    deliveryInput(order.flowLPerMin, order.setFio2Fraction, current.respRate?.value, venturiSettings),
  );
}

/**
 * Builds the assessment for one subject order (the first `isSubject` order unless one is named).
 * Pure: the same facts, policy, order and clock always give the same assessment. `policy` is the
 * effective policy for the encounter's unit and `unit` the match that made it (the engine resolves
 * both once, unit-targets.ts); without `unit`, no unit override is taken to apply.
 */
export function buildAssessment(
  facts: Facts,
  policy: Policy,
  options: { readonly now: Date; readonly order?: OxygenOrder | undefined; readonly unit?: UnitMatch },
): Assessment {
  const { now } = options;
  const order = 'order' in options ? options.order : facts.orders.find((o) => o.isSubject);
  const current = pickCurrentValues(facts, policy, now);
  const barometricPressure = siteBarometricPressure(policy);
  const venturiSettings = stockedVenturiSettings(policy.devices);
  const delivery = estimateOrderDelivery(order, current, venturiSettings);
  // The gas and the SpO2 are often matched to one recorded flow: its estimate is worked out once.
  const atFlow = deliveryAtRecordedFlows(order, delivery, venturiSettings);
  const fio2AtGas = fio2InForceAt(current.arterialGas, facts, order, delivery, policy, atFlow);
  const fio2AtSpo2 = fio2InForceAt(current.spo2, facts, order, delivery, policy, atFlow);

  // An earlier arterial gas on a different FiO2 lets the mechanism hint test for shunt.
  const earlierArterial = newestFirst(facts.bloodGases).find(
    (g) => g.specimen === 'arterial' && g !== current.arterialGas && g.pao2MmHg !== undefined,
  );
  const earlierFio2 = fio2InForceAt(earlierArterial, facts, order, delivery, policy, atFlow);
  const previous =
    earlierArterial?.pao2MmHg !== undefined &&
    earlierFio2.kind === 'ok' &&
    earlierFio2.value.basis !== 'order-estimate'
      ? { fio2Fraction: earlierFio2.value.estimate, pao2MmHg: earlierArterial.pao2MmHg }
      : undefined;

  const hypercapnicRisk = assessHypercapnicRisk(facts, policy, current, now);
  const unit = options.unit ?? { kind: 'none', reason: 'no-units' };
  const target = selectTarget(facts, policy, hypercapnicRisk, unit);
  const targetComparison = compareOrderedTarget(order, target, policy);

  return {
    order,
    barometricPressure,
    delivery,
    current,
    physiology: {
      fio2AtGas,
      fio2AtSpo2,
      ...computeGasPhysiology({
        arterialGas: current.arterialGas,
        fio2AtGas,
        barometricPressureMmHg: barometricPressure.mmHg,
        ageYears: facts.patient.ageYears,
        previous,
        policy,
      }),
      sfRatio: computeSfRatio(current.spo2, fio2AtSpo2),
      rox: computeRox({
        highFlow: highFlowAtReading(facts.activeOrders, order, facts.o2FlowLPerMin, current.spo2, now),
        spo2: current.spo2,
        respRate: current.respRate,
        fio2AtSpo2,
      }),
      oxygenContent: computeOxygenContent({
        haemoglobin: current.haemoglobin,
        spo2: current.spo2,
        arterialGas: current.arterialGas,
      }),
      gasInterpretation: computeGasInterpretation(current.gas, policy),
    },
    hypercapnicRisk,
    unit,
    target,
    targetComparison,
    titrationTarget: selectTitrationTarget(order, target, targetComparison),
    population: assessPopulation(facts, policy),
  };
}
