/**
 * Physiological constants used by the physiology library, each with its source. Pressures are mmHg.
 */

/**
 * Saturated water vapour pressure at 37 °C: 47 mmHg (6.27 kPa). The Buck equation gives 47.1 mmHg;
 * 47 is the value every clinical form of the alveolar gas equation uses (policy key `alveolar-gas`).
 */
export const WATER_VAPOUR_PRESSURE_37C_MMHG = 47;

/**
 * Respiratory quotient (exchange ratio) assumed on a mixed diet: 0.8, the value the alveolar gas
 * equation uses by convention (policy key `alveolar-gas`).
 */
export const RESPIRATORY_QUOTIENT_DEFAULT = 0.8;

/**
 * Oxygen bound by 1 g of fully saturated haemoglobin: 1.34 mL (the usual clinical value; the
 * theoretical value from the molecular weight is 1.39). Policy key `oxygen-content`.
 */
export const HUFNER_CLINICAL_ML_PER_G = 1.34;

/**
 * Solubility of oxygen in plasma at 37 °C: 0.003 mL O2 per dL of blood per mmHg (some sources use
 * 0.0031). Policy key `oxygen-content`.
 */
export const OXYGEN_SOLUBILITY_ML_PER_DL_PER_MMHG = 0.003;

/** Oxygen fraction of dry room air, as the alveolar gas equation uses it (0.2095, rounded). */
export const ROOM_AIR_FIO2 = 0.21;

/**
 * Standard sea-level pressure of the ICAO Standard Atmosphere: 101 325 Pa, which is one standard
 * atmosphere, defined as 760 mmHg (ICAO Doc 7488, 1993; policy key `isa-1993`).
 */
export const STANDARD_SEA_LEVEL_PRESSURE_MMHG = 760;
