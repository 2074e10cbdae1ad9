/**
 * NEWS2 SpO2 points (Royal College of Physicians 2017). Scale 1 is for most patients; Scale 2 only
 * for patients with confirmed hypercapnic respiratory failure whose prescribed target is 88–92 %, on
 * whom Scale 1 would score the target itself as abnormal.
 *
 * Scale 1: ≤ 91 % → 3; 92–93 → 2; 94–95 → 1; ≥ 96 → 0.
 * Scale 2: ≤ 83 % → 3; 84–85 → 2; 86–87 → 1; 88–92, or ≥ 93 on air → 0; on oxygen 93–94 → 1,
 * 95–96 → 2, ≥ 97 → 3. (The separate "air or oxygen" parameter, 2 points on oxygen, is not included.)
 * Readings are whole percentages; a fractional reading is scored by the band its value falls in
 * (91.5 is below 92). Check values: RCP 2017 NEWS2 chart, check-values §4.
 */
export type News2Spo2Scale = 1 | 2;

/** Lower edge of each band, highest first, with its points (RCP 2017). */
const SCALE_1: readonly (readonly [number, number])[] = [
  [96, 0],
  [94, 1],
  [92, 2],
];
const SCALE_2_LOW: readonly (readonly [number, number])[] = [
  [88, 0],
  [86, 1],
  [84, 2],
];
const SCALE_2_ON_OXYGEN_HIGH: readonly (readonly [number, number])[] = [
  [97, 3],
  [95, 2],
  [93, 1],
];
const SCALE_2_TARGET_TOP_PERCENT = 92;

function band(spo2Percent: number, bands: readonly (readonly [number, number])[], below: number): number {
  return bands.find(([edge]) => spo2Percent >= edge)?.[1] ?? below;
}

/**
 * SpO2 points on NEWS2 Scale 1 or 2. `onOxygen` matters on Scale 2 only, above 92 %.
 * @param spo2Percent - 0–100.
 */
export function news2Spo2Points(spo2Percent: number, scale: News2Spo2Scale, onOxygen: boolean): number {
  if (scale === 1) {
    return band(spo2Percent, SCALE_1, 3);
  }
  if (spo2Percent >= SCALE_2_TARGET_TOP_PERCENT + 1) {
    return onOxygen ? band(spo2Percent, SCALE_2_ON_OXYGEN_HIGH, 0) : 0;
  }
  return band(spo2Percent, SCALE_2_LOW, 3);
}
