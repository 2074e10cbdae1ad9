import { STANDARD_SEA_LEVEL_PRESSURE_MMHG } from './constants.js';
import { assertInRange, type ValidRange } from './valid-ranges.js';

/**
 * ICAO Standard Atmosphere, troposphere layer (ICAO Doc 7488, 3rd ed., 1993; policy key `isa-1993`):
 * sea-level temperature 288.15 K, lapse rate 0.0065 K/m, g0 9.80665 m/s², molar mass of air
 * 0.0289644 kg/mol, gas constant 8.31432 J/(mol·K).
 */
const ISA = {
  seaLevelTemperatureK: 288.15,
  lapseRateKPerM: 0.0065,
  gravityMPerS2: 9.80665,
  molarMassKgPerMol: 0.0289644,
  gasConstantJPerMolK: 8.31432,
} as const;

/** g0·M / (R*·L) = 5.25588, the exponent of the ISA barometric formula. */
const ISA_EXPONENT =
  (ISA.gravityMPerS2 * ISA.molarMassKgPerMol) / (ISA.gasConstantJPerMolK * ISA.lapseRateKPerM);

/** The ISA troposphere layer ends at 11 km; the formula below holds from there down. */
const ISA_RANGE: ValidRange = { min: -500, max: 11000, unit: 'm' };

/** West's model was fitted to pressures measured from sea level to the Everest summit. */
const WEST_RANGE: ValidRange = { min: 0, max: 9000, unit: 'm' };

/**
 * West 1996 model atmosphere (J Appl Physiol 81:1850; policy key `west-1996`):
 * PB = exp(6.63268 − 0.1112·h − 0.00149·h²), PB in mmHg, h in km.
 */
const WEST = { a: 6.63268, bPerKm: 0.1112, cPerKm2: 0.00149 } as const;

/** Altitude where {@link siteBarometricPressureMmHg} changes from ISA to the West model. */
export const ISA_TO_WEST_ALTITUDE_M = 5000;

/**
 * Barometric pressure of the ICAO Standard Atmosphere at an altitude.
 *
 * Formula: PB = 760 × (1 − L·h/T0)^(g0·M/(R*·L)), i.e. 760 × (1 − 2.25577×10⁻⁵·h)^5.25588 mmHg
 * (101 325 Pa is one standard atmosphere, 760 mmHg). Check values: 674.1 mmHg at 1000 m, 634.2 at
 * 1500 m, 596.3 at 2000 m.
 *
 * @param altitudeM - metres above mean sea level; valid −500 to 11 000 m (troposphere).
 * @returns pressure in mmHg.
 * @throws RangeError outside the valid range.
 */
export function barometricPressureIsaMmHg(altitudeM: number): number {
  assertInRange('altitudeM', altitudeM, ISA_RANGE);
  const temperatureRatio = 1 - (ISA.lapseRateKPerM * altitudeM) / ISA.seaLevelTemperatureK;
  return STANDARD_SEA_LEVEL_PRESSURE_MMHG * temperatureRatio ** ISA_EXPONENT;
}

/**
 * Barometric pressure from West's 1996 model atmosphere, which reproduces pressures measured on
 * Himalayan and other low-latitude high mountains (252.7 mmHg predicted at the Everest summit
 * against 253.0 measured in 1981; ISA predicts 235.9).
 *
 * Formula: PB = exp(6.63268 − 0.1112·h − 0.00149·h²) mmHg with h in km (West 1996).
 *
 * @param altitudeM - metres above mean sea level; valid 0 to 9000 m.
 * @returns pressure in mmHg.
 * @throws RangeError outside the valid range.
 */
export function barometricPressureWestMmHg(altitudeM: number): number {
  assertInRange('altitudeM', altitudeM, WEST_RANGE);
  // West states the fit with h in kilometres; the metre input is rescaled to keep his coefficients.
  const altitudeKm = altitudeM / 1000;
  return Math.exp(WEST.a - WEST.bPerKm * altitudeKm - WEST.cPerKm2 * altitudeKm ** 2);
}

/**
 * The barometric pressure the service uses for a site when no measured value is configured.
 *
 * Up to 5000 m it uses ISA: the standard atmosphere the policy cites, which every hospital at
 * ordinary altitude can reproduce, and which differs from West's model by under 15 mmHg (under 4 %)
 * there. Above 5000 m it uses West 1996, because ISA is a mid-latitude standard atmosphere that
 * underestimates pressure at high altitude (by about 17 mmHg at the Everest summit), while West's
 * model matches measured Himalayan pressures. The switch makes a step of about 14.5 mmHg at 5000 m;
 * a site that high should configure its measured pressure instead.
 *
 * @param altitudeM - metres above mean sea level; valid −500 to 9000 m.
 * @throws RangeError outside the valid range.
 */
export function siteBarometricPressureMmHg(altitudeM: number): {
  mmHg: number;
  model: 'isa-1993' | 'west-1996';
} {
  assertInRange('altitudeM', altitudeM);
  if (altitudeM <= ISA_TO_WEST_ALTITUDE_M) {
    return { mmHg: barometricPressureIsaMmHg(altitudeM), model: 'isa-1993' };
  }
  return { mmHg: barometricPressureWestMmHg(altitudeM), model: 'west-1996' };
}
