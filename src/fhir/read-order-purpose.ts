import type { OrderPurpose } from '../core/types.js';
import { allMatches } from '../text/all-matches.js';

/**
 * What an oxygen order is for, from its FHIR status and doNotPerform and from its words: a titration
 * (most orders), comfort only (palliative or end-of-life care, BTS 2017), stopping oxygen, weaning it
 * off, or room air (including a flow of 0 L/min). A negation before the words ("do not stop oxygen")
 * leaves the order a titration. FHIR `intent` has no value meaning "stop", so only `status` and
 * `doNotPerform` are read from the coded elements.
 */

/** R4 MedicationRequest and DeviceRequest/ServiceRequest statuses that mean the oxygen is not to go on. */
const ENDED_STATUSES: ReadonlySet<string> = new Set(['stopped', 'cancelled', 'completed', 'revoked', 'entered-in-error']);

const NEGATED = /\b(?:do\s+not|don't|dont|never|not\s+to|no\s+need\s+to)\s+(?:\w+\s+){0,2}$/i;

const STOP = /\b(?:stop|discontinue|cease|d\/c)\s+(?:the\s+)?(?:supplemental\s+)?(?:oxygen|o2)\b|\b(?:oxygen|o2)\s+(?:off|stopped|discontinued|to\s+stop)\b|\bremove\s+(?:the\s+)?(?:oxygen|o2)\b/i;
const COMFORT =
  /\b(?:for|titrate\s+to|titrated\s+to)\s+comfort\b|\bcomfort\s+(?:only|care|measures)\b|\bpalliative\b|\bend[-\s]of[-\s]life\b|\bsymptom(?:atic)?\s+relief\b/i;
const WEAN = /\bwean(?:ing|ed)?\b/i;
const ROOM_AIR = /\b(?:room|ambient)\s+air\b|\bon\s+air\b|\bRA\b/;
const TO_AIR = /\b(?:wean(?:ing|ed)?|step(?:ped)?\s+down)\s+(?:off\s+|to\s+|onto\s+)?(?:room\s+air|air|RA|off)\b/i;

/** Each pattern with the `g` flag that finding every match needs, compiled once rather than on every call. */
const EVERY_MATCH = new Map<RegExp, RegExp>(
  [STOP, COMFORT, WEAN, ROOM_AIR, TO_AIR].map((pattern) => [pattern, new RegExp(pattern.source, `${pattern.flags}g`)]),
);

function statesUnnegated(text: string, pattern: RegExp): boolean {
  const everyMatch = EVERY_MATCH.get(pattern) ?? new RegExp(pattern.source, `${pattern.flags.replace('g', '')}g`);
  for (const m of allMatches(everyMatch, text)) {
    if (!NEGATED.test(text.slice(Math.max(0, m.index - 30), m.index))) {
      return true;
    }
  }
  return false;
}

export interface PurposeInputs {
  readonly status: string | undefined;
  readonly doNotPerform: boolean;
  /** The order's texts, current words only (a superseded part removed). */
  readonly texts: readonly string[];
  readonly flowLPerMin: number | undefined;
}

export function readOrderPurpose({ status, doNotPerform, texts, flowLPerMin }: PurposeInputs): OrderPurpose {
  if (doNotPerform || (status !== undefined && ENDED_STATUSES.has(status))) {
    return 'stop';
  }
  const says = (pattern: RegExp): boolean => texts.some((t) => statesUnnegated(t, pattern));
  if (says(STOP)) {
    return 'stop';
  }
  if (says(COMFORT)) {
    return 'comfort';
  }
  if (says(TO_AIR) || says(WEAN)) {
    return 'wean';
  }
  // "SpO2 90% on RA" describes the patient, so room-air words count only when no flow is ordered.
  if (flowLPerMin === 0 || (flowLPerMin === undefined && says(ROOM_AIR))) {
    return 'room-air';
  }
  return 'titrate';
}
