import { readingMs } from '../time/reading-time.js';
import type { BloodGas, SaturationRange } from '../types.js';

/**
 * Display formatting for the values cards interpolate. Formatting only: no unit conversion (that is
 * the edge's job); a measured pressure is shown in the unit the laboratory reported, a computed one in
 * mmHg, the unit the physiology is published in.
 */

/** Powers of ten for the places {@link roundedAwayFromTie} handles. */
const SCALE = [1, 10, 100, 1000] as const;

/**
 * `|value| × 10^decimals` rounded to a whole number as `toFixed(decimals)` rounds it, or undefined
 * when only `toFixed` can tell: more than 3 places, not finite, 1e6 or more once scaled, or within
 * 1e-9 of a half, where the multiplication's rounding (under 1.2e-10 below 1e6) might have moved the
 * value across the half that the exact decimal reading of the double decides (ECMA-262,
 * Number.prototype.toFixed). Everywhere else the nearest whole number is the same either way.
 * `toFixed` runs the exact algorithm on every call and is several times slower; the cards call this
 * dozens of times a check.
 */
function roundedAwayFromTie(value: number, decimals: number): number | undefined {
  const scale = SCALE[decimals];
  if (scale === undefined) {
    return undefined;
  }
  const scaled = Math.abs(value) * scale;
  if (!(scaled < 1e6)) {
    return undefined;
  }
  const fraction = scaled - Math.floor(scaled);
  return Math.abs(fraction - 0.5) > 1e-9 ? Math.round(scaled) : undefined;
}

/** Rounds to at most `decimals` places and drops trailing zeros: 6.70 → "6.7", 3.0 → "3". */
export function formatNumber(value: number, decimals: number): string {
  // Whole numbers (most card values) need no rounding; below 1e21 String() writes them as toFixed does.
  if (Number.isInteger(value) && Math.abs(value) < 1e21) {
    return String(value === 0 ? 0 : value);
  }
  const rounded = roundedAwayFromTie(value, decimals);
  if (rounded !== undefined) {
    // The digits toFixed would write, with the trailing zeros (and a bare point) already dropped.
    let digits = rounded;
    let places = decimals;
    while (places > 0 && digits % 10 === 0) {
      digits /= 10;
      places -= 1;
    }
    // toFixed keeps the minus sign of a negative value that rounds to zero ("-0.00", trimmed "-0").
    const sign = value < 0 ? '-' : '';
    if (places === 0) {
      return `${sign}${digits}`;
    }
    const scale = SCALE[places] ?? 1;
    const whole = Math.floor(digits / scale);
    return `${sign}${whole}.${String(digits - whole * scale).padStart(places, '0')}`;
  }
  const fixed = value.toFixed(decimals);
  if (!fixed.includes('.')) {
    return fixed;
  }
  let end = fixed.length;
  while (fixed[end - 1] === '0') {
    end -= 1;
  }
  return fixed.slice(0, fixed[end - 1] === '.' ? end - 1 : end);
}

/** "88–92 %" (en dash, space before the unit as in SI usage). */
export function formatRange(range: SaturationRange): string {
  return `${formatNumber(range.lowPercent, 1)}–${formatNumber(range.highPercent, 1)} %`;
}

/** "93 %". */
export function formatPercent(percent: number): string {
  return `${formatNumber(percent, 1)} %`;
}

/** "0.00" to "1.00", each written once: every FiO2 a card shows is one of them. */
const FRACTIONS: readonly string[] = Array.from({ length: 101 }, (_, hundredths) => (hundredths / 100).toFixed(2));

/** FiO2 as a fraction to two places: "0.32" (exactly as `toFixed(2)` writes it). */
export function formatFraction(fraction: number): string {
  const hundredths = fraction >= 0 && fraction <= 1 ? roundedAwayFromTie(fraction, 2) : undefined;
  return (hundredths === undefined ? undefined : FRACTIONS[hundredths]) ?? fraction.toFixed(2);
}

/** "0.32 (0.28–0.36)": an estimate with its plausible range. */
export function formatFio2Range(fio2: {
  readonly estimate: number;
  readonly low: number;
  readonly high: number;
}): string {
  return `${formatFraction(fio2.estimate)} (${formatFraction(fio2.low)}–${formatFraction(fio2.high)})`;
}

/**
 * A device's delivered FiO2 with the point thresholds read, so a card never leaves the reader to
 * guess which number a threshold was compared with:
 * "0.32 (0.28–0.36), thresholds read 0.28 (low end)"; "0.28 (0.26–0.30), thresholds read the set 0.28";
 * "0.60 as set" when the range is the setting itself.
 */
export function formatDeliveredFio2(delivery: {
  readonly fio2: { readonly estimate: number; readonly low: number; readonly high: number };
  readonly thresholdFio2: { readonly fraction: number; readonly point: 'set' | 'low-end' };
}): string {
  const { fio2, thresholdFio2 } = delivery;
  const point = formatFraction(thresholdFio2.fraction);
  if (formatFraction(fio2.low) === formatFraction(fio2.high)) {
    return thresholdFio2.point === 'set' ? `${formatFraction(fio2.estimate)} as set` : formatFraction(fio2.estimate);
  }
  const read = thresholdFio2.point === 'set' ? `the set ${point}` : `${point} (low end)`;
  return `${formatFio2Range(fio2)}, thresholds read ${read}`;
}

/**
 * A whole number that never lands on the wrong side of a cut-off it is compared with. Each cut-off
 * belongs to the band below it (Berlin P/F ≤ 200, Rice S/F ≤ 235), so a value just above one that
 * would round onto it is shown one above it instead: 200.4 → "201", 199.6 → "200", 235.3 → "236".
 * The shift is under 1 unit, well inside the error of the measurements behind these ratios.
 */
export function formatWholeBesideCutoffs(value: number, cutoffsLowerInclusive: readonly number[]): string {
  let shown = Math.round(value);
  const exact = Math.round(value * 1e6) / 1e6;
  for (const cutoff of cutoffsLowerInclusive) {
    if (exact > cutoff && shown <= cutoff) {
      shown = cutoff + 1;
    }
  }
  return String(shown);
}

/**
 * P/F or S/F for a card: a whole number when the FiO2 is exact; "about 219 (194–250)" when it is a
 * range, every figure rounded with {@link formatWholeBesideCutoffs}.
 */
export function formatRatio(
  ratio: { readonly ratio: number; readonly low: number; readonly high: number },
  cutoffsLowerInclusive: readonly number[],
): string {
  const low = formatWholeBesideCutoffs(ratio.low, cutoffsLowerInclusive);
  const high = formatWholeBesideCutoffs(ratio.high, cutoffsLowerInclusive);
  const shown = formatWholeBesideCutoffs(ratio.ratio, cutoffsLowerInclusive);
  return low === high ? shown : `about ${shown} (${low}–${high})`;
}

/** "3 L/min", "22.5 L/min". */
export function formatFlow(flowLPerMin: number): string {
  return `${formatNumber(flowLPerMin, 1)} L/min`;
}

/** A computed pressure, whole mmHg as clinicians read it: "165 mmHg". */
export function formatMmHg(mmHg: number): string {
  return `${formatNumber(mmHg, 0)} mmHg`;
}

export type GasComponent = 'ph' | 'pao2' | 'paco2' | 'hco3';

/** UCUM codes to the spelling a reader expects on a card. */
function displayUnit(unit: string): string {
  return unit === 'mm[Hg]' ? 'mmHg' : unit;
}

/**
 * A blood gas value as the laboratory reported it ("6.7 kPa", "50 mmHg"), falling back to the
 * canonical value when the report is missing (mmHg for pressures, mmol/L for bicarbonate).
 */
export function formatGasValue(gas: BloodGas, component: GasComponent): string | undefined {
  const reported = gas.reported[component];
  if (reported !== undefined) {
    return component === 'ph'
      ? formatNumber(reported.value, 2)
      : `${formatNumber(reported.value, 2)} ${displayUnit(reported.unit)}`;
  }
  switch (component) {
    case 'ph':
      return gas.ph === undefined ? undefined : formatNumber(gas.ph, 2);
    case 'pao2':
      return gas.pao2MmHg === undefined ? undefined : formatMmHg(gas.pao2MmHg);
    case 'paco2':
      return gas.paco2MmHg === undefined ? undefined : formatMmHg(gas.paco2MmHg);
    case 'hco3':
      return gas.hco3MmolPerL === undefined
        ? undefined
        : `${formatNumber(gas.hco3MmolPerL, 1)} mmol/L`;
  }
}

/** A time as ISO text, or a reading, whose time is read from the epoch ms it carries (readingMs). */
export type TimeOrReading = string | { readonly at: string; readonly atMs?: number };

/** Minutes between two times (positive when `later` is after `earlier`); undefined if unreadable. */
export function minutesBetween(earlier: TimeOrReading, later: Date): number | undefined {
  const earlierMs = typeof earlier === 'string' ? Date.parse(earlier) : readingMs(earlier);
  return Number.isNaN(earlierMs) ? undefined : (later.getTime() - earlierMs) / 60_000;
}

/** A duration in words: "45 min", "3 h 10 min", "2 days". */
export function formatDuration(minutes: number): string {
  const whole = Math.round(Math.abs(minutes));
  if (whole < 60) {
    return `${whole} min`;
  }
  if (whole < 48 * 60) {
    const hours = Math.floor(whole / 60);
    const rest = whole % 60;
    return rest === 0 ? `${hours} h` : `${hours} h ${rest} min`;
  }
  return `${Math.round(whole / (24 * 60))} days`;
}

/** "the first of a, b and c" style joining: "a", "a and b", "a, b and c". */
export function joinWords(items: readonly string[]): string {
  if (items.length <= 1) {
    return items[0] ?? '';
  }
  return `${items.slice(0, -1).join(', ')} and ${items[items.length - 1] ?? ''}`;
}

/** A window in minutes: "30–60 min". */
export function formatMinuteWindow(fromMinutes: number, toMinutes: number): string {
  return `${formatNumber(fromMinutes, 0)}–${formatNumber(toMinutes, 0)} min`;
}
