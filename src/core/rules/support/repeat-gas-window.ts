import { formatDuration, formatMinuteWindow } from '../../assessment/format.js';

/**
 * Where a call stands in the repeat blood gas window after oxygen was started or changed in a patient
 * at risk of hypercapnic respiratory failure (BTS 2017, Tables 2–4: 30–60 min,
 * `thresholds.repeatGasMinutes`). Shared by repeat-blood-gas-due (order-sign) and blood-gas-overdue
 * (patient-view), so both count the window the same way. Pure.
 */
export interface RepeatGasWindow {
  /** "30–60 min" */
  readonly repeatWindow: string;
  /** Minutes until the window opens (negative once open). */
  readonly opensIn: number;
  /** Minutes until the window closes (negative once it has closed). */
  readonly closesIn: number;
  /** "in 20–50 min", "now (the window closes in 15 min)", "overdue (the window closed 2 h ago)". */
  readonly dueWindow: string;
}

export function repeatGasWindow(
  changedAtMs: number,
  now: Date,
  window: { readonly from: number; readonly to: number },
): RepeatGasWindow {
  const sinceChange = (now.getTime() - changedAtMs) / 60_000;
  const opensIn = window.from - sinceChange;
  const closesIn = window.to - sinceChange;
  const dueWindow =
    opensIn > 0
      ? `in ${formatMinuteWindow(opensIn, closesIn)}`
      : closesIn > 0
        ? `now (the window closes in ${formatDuration(closesIn)})`
        : closesIn === 0
          ? 'now (the window ends now)'
          : `overdue (the window closed ${formatDuration(closesIn)} ago)`;
  return { repeatWindow: formatMinuteWindow(window.from, window.to), opensIn, closesIn, dueWindow };
}
