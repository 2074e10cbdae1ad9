import type { Finding } from '../types.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/**
 * Some of the data the service asks for (prefetch keys or FHIR searches) could not be had at all, so
 * the check was partial.
 *
 * Rationale: the absence of a warning means little if the data behind it never arrived; naming what
 * was missing lets the user judge. Info. No thresholds.
 * Source: common practice (transparency of decision support).
 */
export const rule: Rule = {
  id: 'required-data-unavailable',
  title: 'Some patient data could not be retrieved',
  version: 1,
  hooks: ['order-sign'],
  defaultIndicator: 'info',
  appliesTo: 'all-ages', // holds for patients of any age
  evaluate: ({ facts }): readonly Finding[] => {
    if (facts.missingData.length === 0) {
      return [];
    }
    return [
      makeFinding(rule, {
        orderReference: undefined, // about the patient, not an order: stated once per call
        values: {
          missingCount: String(facts.missingData.length),
          missingList: facts.missingData.join(', '),
        },
        sourceKeys: ['local-policy'],
      }),
    ];
  },
};
