import { givesOxygen } from '../rules/support/order-purpose.js';
import type { OxygenStep } from '../titration/time-in-range.js';
import { observedOxygenSteps } from '../titration/titration-review.js';
import type { OxygenOrder } from '../types.js';
import type { AuditOrder, AuditPatient } from './types.js';
import { sortByTime } from '../time/sort-by-time.js';

/**
 * When an audited patient was on oxygen, and which order was in force when. Pure.
 *
 * Oxygen starts with an order that gives oxygen (at its authored time) and with a recorded flow above
 * 0 L/min or FiO2 above 0.21; it stops with a stop or room-air order, at an order's recorded end, and
 * with a recorded flow of 0 or FiO2 of 0.21 (the titration review's reading of the same records,
 * src/core/titration). The newest record at a moment decides; oxygen wins a tie.
 */

/** Statuses of orders that were never given: they neither start oxygen nor count as a prescription. */
const NEVER_GIVEN: ReadonlySet<string> = new Set(['cancelled', 'entered-in-error', 'draft']);

export function givenOrders(patient: AuditPatient): AuditOrder[] {
  return patient.orders.filter((o) => o.recordedStatus === undefined || !NEVER_GIVEN.has(o.recordedStatus));
}

/** An order's authored time in ms; an order with no time counts as written before anything else. */
export function authoredMs(order: OxygenOrder): number {
  const ms = order.authoredOn === undefined ? Number.NaN : Date.parse(order.authoredOn);
  return Number.isNaN(ms) ? Number.NEGATIVE_INFINITY : ms;
}

function endedMs(order: AuditOrder): number {
  const ms = order.endedAt === undefined ? Number.NaN : Date.parse(order.endedAt);
  return Number.isNaN(ms) ? Number.POSITIVE_INFINITY : ms;
}

export interface OxygenCourse {
  /** Switches between oxygen and air, oldest first (air before oxygen at one instant). */
  readonly steps: readonly OxygenStep[];
  /** Oxygen before the first step: an order with no authored time was already running. */
  readonly onOxygenAtStart: boolean;
}

export function oxygenCourse(patient: AuditPatient): OxygenCourse {
  const steps: OxygenStep[] = [...observedOxygenSteps(patient)];
  let onOxygenAtStart = false;
  for (const { order, endedAt } of givenOrders(patient)) {
    const gives = givesOxygen(order);
    if (order.authoredOn === undefined) {
      onOxygenAtStart ||= gives;
    } else {
      steps.push({ at: order.authoredOn, onOxygen: gives });
    }
    // An order's end stops oxygen only when no other order is in force then (a newer one may run on).
    if (endedAt !== undefined && gives && orderInForce(patient, Date.parse(endedAt)) === undefined) {
      steps.push({ at: endedAt, onOxygen: false });
    }
  }
  const sorted = sortByTime(
    steps.filter((s) => !Number.isNaN(Date.parse(s.at))),
    (s) => s.at,
    'oldest-first',
    (a, b) => Number(a.onOxygen) - Number(b.onOxygen),
  );
  return { steps: sorted, onOxygenAtStart };
}

/** Oxygen or air at `ms`: the newest step at or before it, else the start state. */
export function onOxygenAt(course: OxygenCourse, ms: number): boolean {
  let state = course.onOxygenAtStart;
  for (const step of course.steps) {
    if (Date.parse(step.at) > ms) {
      break;
    }
    state = step.onOxygen;
  }
  return state;
}

/** The first moment in [startMs, endMs] on oxygen, or undefined when the patient was never on it. */
export function firstOnOxygenMs(course: OxygenCourse, startMs: number, endMs: number): number | undefined {
  if (onOxygenAt(course, startMs)) {
    return startMs;
  }
  const step = course.steps.find((s) => {
    const ms = Date.parse(s.at);
    return s.onOxygen && ms > startMs && ms <= endMs;
  });
  return step === undefined ? undefined : Date.parse(step.at);
}

/**
 * The order in force at `ms`: the newest given order written at or before it, if it gives oxygen and
 * has not ended by then. A newer stop or room-air order means none is in force.
 */
export function orderInForce(patient: AuditPatient, ms: number): AuditOrder | undefined {
  const newest = givenOrders(patient)
    .filter((o) => authoredMs(o.order) <= ms)
    .sort((a, b) => authoredMs(b.order) - authoredMs(a.order))[0];
  return newest !== undefined && givesOxygen(newest.order) && endedMs(newest) > ms ? newest : undefined;
}

/**
 * The patient's oxygen order for the audit: the newest given order that gives oxygen and was in force
 * at some moment of [startMs, endMs] (written by its end, not ended before its start).
 */
export function auditedOrder(patient: AuditPatient, startMs: number, endMs: number): AuditOrder | undefined {
  return givenOrders(patient)
    .filter((o) => givesOxygen(o.order) && authoredMs(o.order) <= endMs && endedMs(o) >= startMs)
    .sort((a, b) => authoredMs(b.order) - authoredMs(a.order))[0];
}

/** The moments in (startMs, endMs) where the order in force may change: orders written or ended. */
export function orderChangesBetween(patient: AuditPatient, startMs: number, endMs: number): number[] {
  const moments = givenOrders(patient).flatMap((o) => [authoredMs(o.order), endedMs(o)]);
  return [...new Set(moments.filter((ms) => ms > startMs && ms < endMs))].sort((a, b) => a - b);
}
