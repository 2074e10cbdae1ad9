import type { BloodGas, ConditionKind, Facts, Measured, OxygenOrder } from '../../../src/core/types.js';
import { activeOrder, BTS, buildFacts, condition, fio2, minutesAgo, o2Flow, spo2 } from '../facts-builder.js';

/**
 * Facts as the reader builds them for patient-view: the active oxygen order on record is the subject
 * and is also listed among the orders on record; readings within the vital-signs window are current,
 * and all of them within the look-back window are kept for trends. Invented Larkspur Bay patients.
 */
export interface ReviewFactsParts {
  readonly order?: Partial<OxygenOrder>;
  /** [value, minutes ago] */
  readonly spo2: readonly (readonly [number, number])[];
  readonly flows?: readonly (readonly [number, number])[];
  readonly fio2?: readonly (readonly [number, number])[];
  readonly gases?: readonly BloodGas[];
  readonly conditions?: readonly ConditionKind[];
}

const newestFirst = (items: readonly Measured[]): Measured[] =>
  [...items].sort((a, b) => Date.parse(b.at) - Date.parse(a.at));

export function reviewFacts(parts: ReviewFactsParts): Facts {
  const onRecord = activeOrder({
    reference: 'MedicationRequest/lb-o2-active',
    flowLPerMin: 4,
    authoredOn: minutesAgo(3 * 24 * 60),
    ...parts.order,
  });
  const subject: OxygenOrder = { ...onRecord, isSubject: true };
  const series = (points: readonly (readonly [number, number])[] | undefined, make: (v: number, age: number) => Measured) =>
    newestFirst((points ?? []).map(([value, age]) => make(value, age)));
  const spo2s = series(parts.spo2, spo2);
  const flows = series(parts.flows, o2Flow);
  const fio2s = series(parts.fio2, fio2);
  const vitals = BTS.freshness.vitalSignsMinutes;
  const current = (items: readonly Measured[]): Measured[] =>
    items.filter((m) => Date.parse(m.at) >= Date.parse(minutesAgo(vitals)));
  return buildFacts({
    orders: [subject],
    activeOrders: [onRecord],
    spo2Percent: current(spo2s),
    o2FlowLPerMin: current(flows),
    fio2Fraction: current(fio2s),
    bloodGases: [...(parts.gases ?? [])],
    conditions: (parts.conditions ?? []).map(condition),
    trendReadings: { spo2Percent: spo2s, o2FlowLPerMin: flows, fio2Fraction: fio2s },
  });
}

/** The same value at each of the given ages: a setting recorded with each SpO2. */
export function steady(value: number, ages: readonly number[]): (readonly [number, number])[] {
  return ages.map((age) => [value, age] as const);
}
