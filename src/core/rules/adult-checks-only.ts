import type { Finding } from '../types.js';
import { makeFinding } from './support/make-finding.js';
import type { Rule } from './support/rule-types.js';

/**
 * The checks are for adults. Below `population.minimumAgeYears` (common practice: 16) the engine runs
 * no adult target, titration, device or physiology advice (rules whose `appliesTo` is `adults`), and
 * this card says that local paediatric policy applies: the guidelines the policy encodes (BTS 2017,
 * BTS/ICS 2016, NEWS2) are for adults, and children's targets, devices and normal values differ. When
 * the record gives no age the adult checks still run and, on order-sign only, this card says the age
 * was not known, so the advice is read as adult advice. Info. No change is suggested.
 * Sources: BTS 2017 (scope: adults); the local policy's minimum age.
 */
export const rule: Rule = {
  id: 'adult-checks-only',
  title: 'Oxygen checks are for adults',
  version: 1,
  hooks: ['order-select', 'order-sign'],
  defaultIndicator: 'info',
  appliesTo: 'all-ages',
  evaluate: ({ assessment, hook }): readonly Finding[] => {
    const population = assessment.population;
    if (population.kind === 'adult' || (population.kind === 'age-unknown' && hook !== 'order-sign')) {
      return [];
    }
    const minimumAge = `${population.minimumAgeYears} and over`;
    const child = population.kind === 'below-minimum-age';
    return [
      makeFinding(rule, {
        orderReference: undefined, // about the patient, not an order: stated once per call
        values: child
          ? {
              ageStatement: `Age ${population.ageYears} years`,
              minimumAge,
              advice: 'follow local paediatric policy',
              whatWasDone:
                'No adult target range, titration, device or physiology advice is given for this patient; ' +
                'checks on data quality and duplicate orders still run.',
            }
          : {
              ageStatement: 'Age not recorded',
              minimumAge,
              advice: 'if younger, follow local paediatric policy',
              whatWasDone:
                'The record gives no birth date, so the adult checks have run on the assumption that the ' +
                'patient is an adult. If the patient is younger, disregard their target and titration advice.',
            },
        sourceKeys: ['bts-2017', 'local-policy'],
      }),
    ];
  },
};
