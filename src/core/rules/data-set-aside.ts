import type { Finding, SetAsideNote } from '../types.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

const REASON_WORDS: Readonly<Record<SetAsideNote['reason'], string>> = {
  implausible: 'implausible',
  stale: 'too old to be current',
  'unreadable-unit': 'unit not readable',
  unrecognised: 'not recognised',
  'error-in-source': 'marked as an error at source',
};

/**
 * The FHIR reader set data aside rather than use it (implausible values, stale readings, unreadable
 * units, entries marked in error), so the user can see what the checks did not use and why.
 *
 * Rationale: a check that silently ignores a reading can mislead; listing what was set aside keeps
 * the advice explainable. Info. No thresholds of its own (the reader applies the freshness and
 * plausibility limits).
 * Source: common practice (transparency of decision support); the local policy's freshness windows.
 */
export const rule: Rule = {
  id: 'data-set-aside',
  title: 'Data set aside by the reader',
  version: 1,
  hooks: ['order-sign'],
  defaultIndicator: 'info',
  appliesTo: 'all-ages', // holds for patients of any age
  evaluate: ({ facts }): readonly Finding[] => {
    if (facts.setAside.length === 0) {
      return [];
    }
    const items = facts.setAside.map((note) => `${note.what}: ${REASON_WORDS[note.reason]} (${note.detail})`);
    return [
      makeFinding(rule, {
        orderReference: undefined, // about the patient, not an order: stated once per call
        values: {
          setAsideCount: String(facts.setAside.length),
          setAsideList: items.join('; '),
        },
        sourceKeys: ['local-policy'],
      }),
    ];
  },
};
