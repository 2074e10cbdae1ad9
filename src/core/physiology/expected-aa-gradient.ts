import { assertInRange } from './valid-ranges.js';

/**
 * Upper expected A-a gradient for age on room air: age / 4 + 4 mmHg (common practice, no single
 * published source; policy key `aa-gradient-age`). Check values: 9, 14, 19 and 24 mmHg at 20, 40,
 * 60 and 80 years.
 *
 * The norm applies on room air only: the normal gradient widens as FiO2 rises, so on oxygen it is
 * not a reference (`hypoxaemiaMechanism` widens it and says the comparison is less reliable).
 *
 * @param ageYears - adults, 18–120 years.
 * @throws RangeError outside that range.
 */
export function expectedAaGradientMmHg(ageYears: number): number {
  assertInRange('ageYears', ageYears);
  return ageYears / 4 + 4;
}

/**
 * Mean A-a gradient for age on room air from Mellemgaard (Acta Physiol Scand 1966):
 * 2.5 + 0.21 × age mmHg. Check values: 6.7, 10.9, 15.1 and 19.3 mmHg at 20, 40, 60 and 80 years.
 * It is a mean, so it sits below the age / 4 + 4 upper rule; offered as an alternative. Room air
 * only, adults 18–120 years.
 *
 * @throws RangeError outside that range.
 */
export function expectedAaGradientMellemgaardMmHg(ageYears: number): number {
  assertInRange('ageYears', ageYears);
  return 2.5 + 0.21 * ageYears;
}
