import type { Finding } from '../types.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/**
 * Data the service asks for whose absence can change no finding, by the name `Facts.missingData`
 * gives it (the prefetch key, optionally followed by a note such as "(incomplete: …)"):
 * - `encounter`: only the ward name, shown in the workings; no rule reads it.
 * - `medicationRequests`, `serviceRequests`: oxygen orders already on the record, read only by the
 *   duplicate-order check. Many clients never send them; a card on every call for a check the client
 *   has chosen not to feed is alert fatigue, and the EHR shows the prescriber the active orders.
 * Everything else (observations, conditions, any name not listed here) can change a target, a
 * threshold or a critical card, so it is reported.
 */
export const CONTEXT_ONLY_DATA: readonly string[] = ['encounter', 'medicationRequests', 'serviceRequests'];

function dataName(missing: string): string {
  return missing.split(' (')[0]?.trim() ?? missing;
}

/** The missing data that could change a finding, in the order given. */
export function missingThatMatters(missingData: readonly string[]): string[] {
  return missingData.filter((missing) => !CONTEXT_ONLY_DATA.includes(dataName(missing)));
}

/** The orders on record: on patient-view they hold the active oxygen order the review is about. */
const ORDER_DATA: readonly string[] = ['medicationRequests', 'serviceRequests', 'deviceRequests'];

/** On patient-view only the ward name is context; the orders on record are the subject. */
export function missingForReview(missingData: readonly string[]): string[] {
  return missingData.filter((missing) => dataName(missing) !== 'encounter');
}

/**
 * Some of the data the service asks for (prefetch keys or FHIR searches) could not be had, or was
 * read only in part, and that data could change a finding, so the check was partial.
 *
 * Rationale: the absence of a warning means little if the data behind it never arrived; naming what
 * was missing lets the user judge. Data that feeds no finding (see {@link CONTEXT_ONLY_DATA}) raises
 * no card, because a card on every call would teach users to ignore this one. Info. No thresholds.
 * On patient-view the orders on record are the review's subject, so their absence is reported, and
 * the card speaks only when there is an active oxygen order or the orders could not be read.
 * Source: common practice (transparency of decision support).
 */
export const rule: Rule = {
  id: 'required-data-unavailable',
  title: 'Some patient data could not be retrieved',
  version: 2,
  hooks: ['order-sign', 'patient-view'],
  defaultIndicator: 'info',
  appliesTo: 'all-ages', // holds for patients of any age
  evaluate: ({ facts, hook, assessment }): readonly Finding[] => {
    const missing = hook === 'patient-view' ? missingForReview(facts.missingData) : missingThatMatters(facts.missingData);
    // patient-view fires on every record opened: without an oxygen order the review does not apply,
    // unless the orders themselves could not be read.
    const reviewApplies = assessment.order !== undefined || missing.some((m) => ORDER_DATA.includes(dataName(m)));
    if (missing.length === 0 || (hook === 'patient-view' && !reviewApplies)) {
      return [];
    }
    return [
      makeFinding(rule, {
        orderReference: undefined, // about the patient, not an order: stated once per call
        values: {
          missingCount: String(missing.length),
          missingList: missing.join(', '),
        },
        sourceKeys: ['local-policy'],
      }),
    ];
  },
};
