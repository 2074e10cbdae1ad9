import { highFlowAtReading, highFlowFio2AtReading } from '../../assessment/bedside-physiology.js';
import type { HighFlowAtReading } from '../../assessment/bedside-physiology.js';
import { oncePerAssessment } from '../../assessment/once-per-assessment.js';
import type { Assessment } from '../../assessment/types.js';
import { readingMs } from '../../time/reading-time.js';
import type { Policy } from '../../policy.js';
import type { Facts, Measured, OxygenOrder, SaturationRange } from '../../types.js';

/** The rule that owns the "escalated support failing" message; other rules stay silent when it fires. */
export const ESCALATED_SUPPORT_FAILING_ID = 'escalated-support-failing';

/** A patient below target on high flow at a high set FiO2, or on CPAP/NIV: therapy at the top of the ward failing. */
export interface EscalatedSupportFailure {
  readonly support: 'high-flow' | 'cpap-niv';
  readonly spo2: Measured;
  readonly target: SaturationRange;
  /** On high flow: the FiO2 at the reading (recorded, else set on the order in force), with its basis in words. */
  readonly fio2AtReading: { readonly fraction: number; readonly words: string } | undefined;
  /** On high flow: the set FiO2 this order asks for, when at or above the threshold and not the one at the reading. */
  readonly orderedHighFio2: number | undefined;
}

/**
 * The FiO2 a patient on high flow was breathing when the SpO2 was read: the recorded FiO2 at the
 * reading, else the set FiO2 of the high-flow order in force; undefined when neither is known.
 */
export function highFlowFio2InWords(
  assessment: Assessment,
  highFlow: HighFlowAtReading,
): { readonly fraction: number; readonly words: string } | undefined {
  const atReading = highFlowFio2AtReading(assessment.physiology.fio2AtSpo2, highFlow);
  return atReading === undefined
    ? undefined
    : {
        fraction: atReading.fraction,
        words: atReading.from === 'recorded' ? 'recorded at the reading' : 'set on the high-flow order',
      };
}

function cpapNivInForce(facts: Facts, order: OxygenOrder, spo2: Measured): boolean {
  const isNiv = (o: OxygenOrder): boolean => o.device === 'cpap-niv';
  const orderInForce = order.authoredOn !== undefined && Date.parse(order.authoredOn) <= readingMs(spo2);
  return facts.activeOrders.some(isNiv) || (orderInForce && isNiv(order));
}

/** For an SpO2 below target, worked out once per assessment: five rules ask, and the answer depends on its inputs alone. */
const failureOnce = oncePerAssessment(({ assessment, facts, policy, now }) => workOutFailure(assessment, facts, policy, now));

/**
 * Whether the patient is failing escalated support: the current SpO2 is below the titration target
 * while on CPAP/NIV, or on high flow at a set FiO2 at or above `thresholds.highFlowFailingFio2AtLeast`
 * (at the reading, or set by this order). "On" means in force when the SpO2 was read: an active order
 * on record, this order if written before the reading, or for high flow a recorded flow only high
 * flow reaches; a new order for high flow or NIV is the response to the reading, not its failure.
 * Not for comfort orders (no titration) or where no SpO2 target applies.
 */
export function findEscalatedSupportFailure(
  assessment: Assessment,
  facts: Facts,
  policy: Policy,
  now: Date,
): EscalatedSupportFailure | undefined {
  // Most calls stop at the SpO2 against the target, read straight off the assessment: only a patient
  // below target is worth the remembered look at the support in force.
  return belowTarget(assessment) === undefined ? undefined : failureOnce({ assessment, facts, policy, now });
}

/** The current SpO2 and the range it is below, for an order that titrates to one; else undefined. */
function belowTarget(assessment: Assessment): { readonly spo2: Measured; readonly target: SaturationRange } | undefined {
  const { order, titrationTarget } = assessment;
  const spo2 = assessment.current.spo2;
  if (order === undefined || spo2 === undefined || titrationTarget === undefined || order.purpose === 'comfort') {
    return undefined;
  }
  return spo2.value < titrationTarget.range.lowPercent ? { spo2, target: titrationTarget.range } : undefined;
}

function workOutFailure(
  assessment: Assessment,
  facts: Facts,
  policy: Policy,
  now: Date,
): EscalatedSupportFailure | undefined {
  const order = assessment.order;
  const base = belowTarget(assessment);
  if (order === undefined || base === undefined) {
    return undefined;
  }
  const { spo2 } = base;
  if (cpapNivInForce(facts, order, spo2)) {
    return { ...base, support: 'cpap-niv', fio2AtReading: undefined, orderedHighFio2: undefined };
  }
  const highFlow = highFlowAtReading(facts.activeOrders, order, facts.o2FlowLPerMin, spo2, now);
  if (highFlow === undefined) {
    return undefined;
  }
  const threshold = policy.thresholds.highFlowFailingFio2AtLeast;
  const fio2AtReading = highFlowFio2InWords(assessment, highFlow);
  // This order's own setting counts when it raises the FiO2 to the threshold or above.
  const ordered =
    order.device === 'high-flow-nasal-cannula' &&
    order.setFio2Fraction !== undefined &&
    order.setFio2Fraction >= threshold &&
    order.setFio2Fraction !== fio2AtReading?.fraction
      ? order.setFio2Fraction
      : undefined;
  if ((fio2AtReading === undefined || fio2AtReading.fraction < threshold) && ordered === undefined) {
    return undefined;
  }
  return { ...base, support: 'high-flow', fio2AtReading, orderedHighFio2: ordered };
}

/**
 * True when `escalated-support-failing` will say it for this order: the failure is found and the
 * hospital has not switched that rule off (then the other rules speak as before, so nothing is lost).
 */
export function escalatedSupportFailingSpeaks(
  assessment: Assessment,
  facts: Facts,
  policy: Policy,
  now: Date,
): boolean {
  return (
    !policy.disabledRules.includes(ESCALATED_SUPPORT_FAILING_ID) &&
    findEscalatedSupportFailure(assessment, facts, policy, now) !== undefined
  );
}
