import type { Policy } from '../policy.js';
import type { Facts } from '../types.js';
import type { PopulationDecision } from './types.js';

/**
 * Whether the adult checks apply. The guidelines the policy encodes (BTS 2017, BTS/ICS 2016, TSANZ
 * 2015, NEWS2) are for adults; below `population.minimumAgeYears` (common practice: 16) local
 * paediatric policy applies, and the engine gives no adult target or titration advice. An age the
 * record does not give is `age-unknown`: the adult checks still run (the service is for adult
 * inpatients) and one card says the age was not known.
 */
export function assessPopulation(facts: Facts, policy: Policy): PopulationDecision {
  const minimumAgeYears = policy.population.minimumAgeYears;
  const ageYears = facts.patient.ageYears;
  if (ageYears === undefined) {
    return { kind: 'age-unknown', minimumAgeYears };
  }
  return ageYears < minimumAgeYears
    ? { kind: 'below-minimum-age', ageYears, minimumAgeYears }
    : { kind: 'adult', ageYears };
}
