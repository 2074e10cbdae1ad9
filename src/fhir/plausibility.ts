/**
 * Plausibility limits: values outside these are taken to be entry or device errors and set aside
 * with a note rather than used. They are common practice plausibility limits (no single published
 * source), deliberately wide so that a real but extreme value is kept; they are not clinical
 * thresholds and never decide advice on their own.
 */
export interface PlausibleRange {
  readonly min: number;
  readonly max: number;
  /** Unit the limits are in, for the note. */
  readonly unit: string;
}

export const PLAUSIBLE = {
  spo2Percent: { min: 50, max: 100, unit: '%' },
  fio2Fraction: { min: 0.21, max: 1, unit: '' },
  o2FlowLPerMin: { min: 0, max: 80, unit: 'L/min' },
  respRatePerMin: { min: 0, max: 80, unit: '/min' },
  ph: { min: 6.8, max: 7.8, unit: '' },
  po2MmHg: { min: 10, max: 700, unit: 'mmHg' },
  pco2MmHg: { min: 5, max: 200, unit: 'mmHg' },
  hco3MmolPerL: { min: 2, max: 60, unit: 'mmol/L' },
  baseExcessMmolPerL: { min: -40, max: 40, unit: 'mmol/L' },
  haemoglobinGPerDL: { min: 2, max: 25, unit: 'g/dL' },
  bmiKgPerM2: { min: 10, max: 100, unit: 'kg/m2' },
  /** An ordered target range, in percent. */
  targetPercent: { min: 50, max: 100, unit: '%' },
} as const satisfies Readonly<Record<string, PlausibleRange>>;

export function isPlausible(value: number, range: PlausibleRange): boolean {
  return Number.isFinite(value) && value >= range.min && value <= range.max;
}

/** "50–100 %" for notes. */
export function describeRange(range: PlausibleRange): string {
  return `${range.min}–${range.max}${range.unit === '' ? '' : ` ${range.unit}`}`;
}

/** Clock skew allowed before a value dated in the future is set aside. */
export const FUTURE_SKEW_MS = 5 * 60_000;
