import type { Policy } from '../policy.js';
import type { BloodGas, Facts, Measured } from '../types.js';
import { minutesBetween, type TimeOrReading } from './format.js';
import type { CurrentValues } from './types.js';
import { isNewestFirst, readWithin } from '../time/reading-time.js';
import { sortByTime } from '../time/sort-by-time.js';

/** True when `at` is no older than `windowMinutes` before `now` (a slightly future time counts). */
export function isWithin(at: TimeOrReading, now: Date, windowMinutes: number): boolean {
  const age = minutesBetween(at, now);
  return age !== undefined && age <= windowMinutes;
}

/**
 * Sorted most recent first; the reader promises this order, but the core does not rely on it. A list
 * already in that order is returned as it is (a stable sort would not move anything).
 */
export function newestFirst<T extends { readonly at: string }>(items: readonly T[]): readonly T[] {
  return isNewestFirst(items) ? items : sortByTime(items, (item) => item.at, 'newest-first');
}

function latestWithin<T extends { readonly at: string }>(
  items: readonly T[],
  now: Date,
  windowMinutes: number,
): T | undefined {
  const nowMs = now.getTime();
  return newestFirst(items).find((item) => readWithin(item, nowMs, windowMinutes));
}

/** The first of `tiers` that finds a gas within the window, else undefined. */
function firstTier(
  gases: readonly BloodGas[],
  tiers: readonly ((gas: BloodGas) => boolean)[],
  now: Date,
  windowMinutes: number,
): BloodGas | undefined {
  for (const keep of tiers) {
    const found = latestWithin(gases.filter(keep), now, windowMinutes);
    if (found !== undefined) {
      return found;
    }
  }
  return undefined;
}

/**
 * Picks the current values the checks use. A venous or unlabelled gas still counts as the current gas
 * for PCO2 and pH; only an arterial gas feeds PaO2-based numbers (venous PO2 says little about
 * arterial oxygenation, BTS 2017).
 *
 * A later partial gas (a lone PO2, or a pH filed without its PCO2) never displaces an earlier,
 * fuller one within the window: the acid-base gas is the latest with both pH and PCO2, else the
 * latest with a PCO2, else with a pH; the arterial gas is the latest with a PaO2. Otherwise a value
 * filed late would hide the hypercapnic acidosis of a gas taken minutes before it.
 */
export function pickCurrentValues(facts: Facts, policy: Policy, now: Date): CurrentValues {
  const vitals = policy.freshness.vitalSignsMinutes;
  const gasWindow = policy.freshness.bloodGasMinutes;
  const gases: readonly BloodGas[] = facts.bloodGases;
  return {
    spo2: latestWithin<Measured>(facts.spo2Percent, now, vitals),
    respRate: latestWithin<Measured>(facts.respRatePerMin, now, vitals),
    haemoglobin: latestWithin<Measured>(
      facts.haemoglobinGPerDL,
      now,
      policy.freshness.haemoglobinHours * 60,
    ),
    gas: firstTier(
      gases,
      [
        (g) => g.ph !== undefined && g.paco2MmHg !== undefined,
        (g) => g.paco2MmHg !== undefined,
        (g) => g.ph !== undefined,
        () => true,
      ],
      now,
      gasWindow,
    ),
    arterialGas: firstTier(
      gases.filter((gas) => gas.specimen === 'arterial'),
      [(g) => g.pao2MmHg !== undefined, () => true],
      now,
      gasWindow,
    ),
  };
}
