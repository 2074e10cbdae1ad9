import type { SaturationRange } from '../core/types.js';
import { PLAUSIBLE, isPlausible } from './plausibility.js';

/**
 * Finds target SpO2 ranges written in order text: "target SpO2 88-92%", "88–92%", "SpO2 94 to 98 %",
 * "aim sats 88-92". A range counts when a saturation word comes before it in the same clause, or when
 * it ends in "%" and no FiO2 word precedes it. Both ends must be 50–100 with low below high.
 */

export interface TargetMention {
  readonly range: SaturationRange;
  /** Offsets of the whole range and of each number, so a rewrite can keep the writer's style. */
  readonly start: number;
  readonly end: number;
  readonly lowStart: number;
  readonly lowEnd: number;
  readonly highStart: number;
  readonly highEnd: number;
}

const RANGE =
  /(?<![\d.])(\d{2,3})(\s*%?\s*(?:-|–|—|to)\s*)(\d{2,3})(?![\d])(\s*%)?(?!\s*(?:mm|kpa|l\b|l\/|lpm|litre|liter|torr))/gi;
const SATURATION_WORD = /\b(?:target(?:ing)?|aim(?:ing)?|sats?|saturations?|spo2|sao2|sp02|o2 sat|keep|maintain|titrate|goal|range)\b/i;
const FIO2_WORD = /\b(?:fi\s?[o0]2|venturi|concentration|blender|entrainment)\b/i;
const CLAUSE_BREAK = /[;\n]|\.(?:\s|$)/g;

/**
 * How far back a clause is read. Order clauses are short; looking back a bounded distance keeps each
 * mention's cost constant, where rescanning from the start made long texts quadratic.
 */
export const CLAUSE_LOOK_BACK_CHARS = 200;

/** The text from the start of the clause holding `index` up to `index` (at most the look-back). */
export function clauseBefore(text: string, index: number): string {
  const from = Math.max(0, index - CLAUSE_LOOK_BACK_CHARS);
  const window = text.slice(from, index);
  let start = 0;
  for (const m of window.matchAll(CLAUSE_BREAK)) {
    start = m.index + m[0].length;
  }
  return window.slice(start);
}

export function findTargetMentions(text: string): readonly TargetMention[] {
  const mentions: TargetMention[] = [];
  for (const m of text.matchAll(RANGE)) {
    const [whole, lowText = '', gap = '', highText = '', percent] = m;
    const low = Number(lowText);
    const high = Number(highText);
    const inRange = isPlausible(low, PLAUSIBLE.targetPercent) && isPlausible(high, PLAUSIBLE.targetPercent);
    if (!inRange || low >= high) {
      continue;
    }
    const before = clauseBefore(text, m.index).slice(-40);
    const sinceWord = before.split(SATURATION_WORD);
    const hasSaturationWord = sinceWord.length > 1;
    // Words after the last saturation word decide: "SpO2 88-92" counts, "FiO2 60-80 %" does not.
    const tail = sinceWord[sinceWord.length - 1] ?? '';
    if (FIO2_WORD.test(tail) || (!hasSaturationWord && (percent === undefined || FIO2_WORD.test(before)))) {
      continue;
    }
    const lowStart = m.index;
    const highStart = lowStart + lowText.length + gap.length;
    mentions.push({
      range: { lowPercent: low, highPercent: high },
      start: m.index,
      end: m.index + whole.length,
      lowStart,
      lowEnd: lowStart + lowText.length,
      highStart,
      highEnd: highStart + highText.length,
    });
  }
  return mentions;
}

/** The first target range stated in `text`, if any. */
export function readTargetText(text: string): SaturationRange | undefined {
  return findTargetMentions(text)[0]?.range;
}
