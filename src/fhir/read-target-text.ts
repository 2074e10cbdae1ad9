import type { SaturationRange, TargetNote } from '../core/types.js';
import { PLAUSIBLE, isPlausible } from './plausibility.js';
import { allMatches } from '../text/all-matches.js';

/**
 * Finds target SpO2 statements in order text, in the notations prescribers use:
 * - ranges: "target SpO2 88-92%", "88–92%" (any Unicode dash or minus), "SpO2 94 to 98 %", "aim sats
 *   88-92", "between 88 and 92 percent", "88-92 per cent";
 * - one bound: "SpO2 > 94%", "keep sats above 92", "≥ 92 %", "at least 92%", "sats not below 88";
 * - conditions on a target: "88–92 % if drowsy", "94–98 % until the gas is back";
 * - statements that there is no SpO2 target: "no SpO2 target", "titrate to comfort", "do not monitor sats".
 * A number counts when a saturation word comes before it in the same clause, or when it ends in "%"
 * and no FiO2 word precedes it. Trigger clauses ("if SpO2 below 85 % call doctor") are contingency plans,
 * not targets; they are returned separately so a rewrite can say it left them alone.
 */

export interface TargetMention {
  readonly range: SaturationRange;
  /** Offsets of the whole statement and of each number, so a rewrite can keep the writer's style. */
  readonly start: number;
  readonly end: number;
  readonly lowStart: number;
  readonly lowEnd: number;
  readonly highStart: number;
  readonly highEnd: number;
  /** True when words around it make it conditional ("if drowsy", "until the gas is back"). */
  readonly conditional: boolean;
  /** True when written as fractions ("SpO2 target 0.94-0.98"), so a rewrite writes fractions too. */
  readonly fraction: boolean;
}

/** A target written as one number with no bound word ("target SpO2 94%"). */
export interface SingleValueMention {
  readonly percent: number;
  /** Offsets of the number and its "%", which a rewrite replaces with a range. */
  readonly start: number;
  readonly end: number;
  readonly conditional: boolean;
}

export type Bound = 'at-least' | 'above' | 'at-most' | 'below';

export interface BoundMention {
  readonly bound: Bound;
  readonly percent: number;
  /** Offsets of the comparison and the number ("above 92", "≥ 92 %"). */
  readonly start: number;
  readonly end: number;
  readonly conditional: boolean;
}

/** Hyphen, the Unicode hyphens and dashes, the minus sign, and the small and full-width hyphen-minus. */
export const DASH_CLASS = '[-\u2010\u2011\u2012\u2013\u2014\u2212\uFE63\uFF0D]';
const PERCENT = String.raw`\s*(?:%|\uFF05|per\s?cent\b|pc\b)`;
const NOT_A_SATURATION_UNIT = String.raw`(?!\s*(?:mm|kpa|l\b|l\/|lpm|litre|liter|torr|cm|breaths|bpm|\/min))`;
/** Compiled once: no pressure, flow or rate unit follows a number. */
const SATURATION_UNIT_FOLLOWS = new RegExp(`^${NOT_A_SATURATION_UNIT}`, 'i');

const RANGE = new RegExp(
  String.raw`(?<![\d.])(?:(between|from)\s+)?(\d{2,3})((?:${PERCENT})?\s*(?:${DASH_CLASS}|\bto\b|\band\b)\s*)(\d{2,3})(?!\d|\.\d)(${PERCENT})?${NOT_A_SATURATION_UNIT}`,
  'gi',
);

/**
 * A range written as fractions of one ("SpO2 target 0.94-0.98"). Read only with a saturation word
 * before it and both ends from 0.5 to 1.0, so FiO2 settings ("FiO2 0.28-0.35") are not read as targets.
 */
const FRACTION = String.raw`(?:0?\.\d{1,2}|1(?:\.0{1,2})?)`;
const FRACTION_RANGE = new RegExp(
  String.raw`(?<![\d.])(${FRACTION})(\s*(?:${DASH_CLASS}|\bto\b)\s*)(${FRACTION})(?![\d.%])`,
  'gi',
);
const FRACTION_LOWEST = 0.5;

/** One number that may be a whole target ("target SpO2 94%"); the words before it decide. */
const SINGLE = new RegExp(String.raw`(?<![\d.,])(\d{2,3})(?!\d|[.,]\d)(${PERCENT})?`, 'gi');
/** Words that make a number right after them the target, not an observation ("sats 91% on air"). */
const TARGET_WORD = /\b(?:target(?:ing|ed)?|aim(?:ing)?(?:\s+for)?|goal|keep|maintain|titrate(?:d)?\s+to)\b/gi;
/** What may stand between the target word and its number: "target SpO2 of 94%", "aim sats: 94". */
const TARGET_TO_NUMBER =
  /^(?:[\s:=~≈]|\b(?:spo2|sp02|sao2|sats?|saturations?|o2|oxygen|of|is|at|to|around|about|approx(?:imately)?|for|range)\b)*$/i;
/** Words after a number that make it a bound or part of a range: "94% or above", "94+", "94 to 98". */
const NOT_SINGLE_AFTER = new RegExp(
  String.raw`^\s*(?:${PERCENT})?\s*(?:\+|(?:or|and)\s+(?:above|over|more|higher|greater|below|under|less|lower|up|down)\b|${DASH_CLASS}\s*\d|to\s+\d|and\s+\d|\.\d)`,
  'i',
);

const AT_LEAST = String.raw`≥|>=|=>|at\s+least|not\s+(?:less|lower)\s+than|no\s+(?:less|lower)\s+than|not\s+below|not\s+under|not\s+<|minimum(?:\s+of)?|min\.?`;
const AT_MOST = String.raw`≤|<=|=<|at\s+most|not\s+(?:more|greater|higher)\s+than|no\s+(?:more|greater|higher)\s+than|not\s+above|not\s+over|not\s+>|maximum(?:\s+of)?|max\.?|up\s+to`;
const ABOVE = String.raw`>|above|over|greater\s+than|more\s+than|higher\s+than`;
const BELOW = String.raw`<|below|under|less\s+than|lower\s+than`;
const BOUND = new RegExp(
  String.raw`(?<![\w<>=≤≥])(?:(${AT_LEAST})|(${AT_MOST})|(${ABOVE})|(${BELOW}))\s*(\d{2,3})(?!\d|\.\d)(${PERCENT})?(?!\s*(?:${DASH_CLASS}|to\b)\s*\d)${NOT_A_SATURATION_UNIT}`,
  'gi',
);

const SATURATION_WORD =
  /\b(?:target(?:ing)?|aim(?:ing)?|sats?|saturations?|spo2|sao2|sp02|o2 sat|keep|maintain|titrate|goal|range)\b/i;
const FIO2_WORD = /\b(?:fi\s?[o0]2|venturi|concentration|blender|entrainment|pa?[o0]2|pa?co2|pao2|kpa|mmhg)\b/i;
/** Words that make a statement a trigger for action, not the target ("if SpO2 below 85 % call doctor"). */
const TRIGGER = /\b(?:if|when|whenever|should|call|inform|notify|alert|escalate|bleep|contact|drops?|falls?|unless)\b/i;
/** Words that put a condition on a target ("until the gas is back", "initially", "pending ABG"). */
const CONDITION =
  /\b(?:until|till|pending|unless|otherwise|initially|for now|awaiting|await|once|then|while|whilst|meanwhile)\b/i;
/** "if drowsy", "when the gas is back": a condition, unless the words name a saturation or an action. */
const IF_CLAUSE = /\b(?:if|when)\s+([^,;.\n]{0,40})/i;
const IF_IS_ROUTINE = /^(?:needed|required|tolerated|able|possible|necessary|appropriate)\b/i;
const IF_IS_TRIGGER =
  /\b(?:spo2|sp02|sats?|saturations?|below|above|under|over|drops?|falls?|less|more|call|inform|increase|decrease|reduce|titrate|escalate|notify|wean|stop)\b|[<>≤≥]/i;

const NO_TARGET =
  /\bno\s+(?:spo2\s+|sp02\s+|sats?\s+|saturation\s+|oxygen\s+|o2\s+)?target(?:\s+range)?\b|\btarget\s*(?::|-|=)?\s*(?:none|n\/a|not applicable)\b|\btitrat(?:e|ed|ing)\s+to\s+comfort\b|\bdo\s+not\s+(?:monitor|check|measure|record|titrate to)\s+(?:the\s+)?(?:spo2|sats?|saturations?|oximetry)\b|\b(?:spo2|sats?|saturation|oximetry)\s+(?:monitoring\s+)?not\s+(?:required|needed|necessary|indicated)\b|\bno\s+(?:need\s+to\s+(?:monitor|check)\s+|)(?:spo2|sats?|saturation|oximetry)\s+monitoring\b/i;

/**
 * Every range, bound and single value found below holds a number, so a text without a digit (most
 * orders carry their name, "Oxygen therapy", as one of their texts) is not searched for them; the
 * flow and FiO2 readers (read-setting-text.ts) use it the same way.
 */
export const DIGIT = /\d/;

const CLAUSE_BREAK = /[;\n]|\.(?:\s|$)/g;
const SENTENCE_END = /[;\n]|\.(?:\s|$)/;

/**
 * How far back a clause is read. Order clauses are short; looking back a bounded distance keeps each
 * mention's cost constant, where rescanning from the start made long texts quadratic.
 */
export const CLAUSE_LOOK_BACK_CHARS = 200;
/** How far after a statement a condition on it is looked for ("94–98 % until the gas is back"). */
const CONDITION_LOOK_AHEAD_CHARS = 50;

/** The text from the start of the clause holding `index` up to `index` (at most the look-back). */
export function clauseBefore(text: string, index: number): string {
  const from = Math.max(0, index - CLAUSE_LOOK_BACK_CHARS);
  const window = text.slice(from, index);
  let start = 0;
  for (const m of allMatches(CLAUSE_BREAK, window)) {
    start = m.index + m[0].length;
  }
  return window.slice(start);
}

/** The text after `index` up to the end of its sentence (at most the look-ahead). */
function clauseAfter(text: string, index: number): string {
  const window = text.slice(index, index + CONDITION_LOOK_AHEAD_CHARS);
  const end = window.search(SENTENCE_END);
  return end === -1 ? window : window.slice(0, end);
}

function hasConditionIn(words: string): boolean {
  if (CONDITION.test(words)) {
    return true;
  }
  const ifClause = IF_CLAUSE.exec(words);
  const rest = ifClause?.[1]?.trim() ?? '';
  return ifClause !== null && !IF_IS_ROUTINE.test(rest) && !IF_IS_TRIGGER.test(rest);
}

function isConditional(text: string, start: number, end: number): boolean {
  return hasConditionIn(clauseBefore(text, start)) || hasConditionIn(clauseAfter(text, end));
}

/** Whether the words before `index` make a number there a saturation, not an FiO2 or a bed number. */
function saysSaturation(text: string, index: number, hasPercent: boolean): boolean {
  const before = clauseBefore(text, index).slice(-40);
  const sinceWord = before.split(SATURATION_WORD);
  const hasSaturationWord = sinceWord.length > 1;
  // Words after the last saturation word decide: "SpO2 88-92" counts, "FiO2 60-80 %" does not.
  const tail = sinceWord[sinceWord.length - 1] ?? '';
  if (FIO2_WORD.test(tail)) {
    return false;
  }
  return hasSaturationWord || (hasPercent && !FIO2_WORD.test(before));
}

const plausible = (value: number): boolean => isPlausible(value, PLAUSIBLE.targetPercent);

export function findTargetMentions(text: string): readonly TargetMention[] {
  if (!DIGIT.test(text)) return [];
  const mentions: TargetMention[] = [];
  for (const m of allMatches(RANGE, text)) {
    const [whole, lead, lowText = '', gap = '', highText = '', percent] = m;
    const low = Number(lowText);
    const high = Number(highText);
    // "88 and 92" is a range only after "between".
    if (!plausible(low) || !plausible(high) || low >= high || (/\band\b/i.test(gap) && lead?.toLowerCase() !== 'between')) {
      continue;
    }
    if (!saysSaturation(text, m.index, percent !== undefined || /%|per\s?cent/i.test(gap))) {
      continue;
    }
    const lowStart = m.index + whole.indexOf(lowText, lead === undefined ? 0 : lead.length);
    const highStart = lowStart + lowText.length + gap.length;
    const end = m.index + whole.length;
    mentions.push({
      range: { lowPercent: low, highPercent: high },
      start: m.index,
      end,
      lowStart,
      lowEnd: lowStart + lowText.length,
      highStart,
      highEnd: highStart + highText.length,
      conditional: isConditional(text, m.index, end),
      fraction: false,
    });
  }
  for (const m of allMatches(FRACTION_RANGE, text)) {
    const [whole, lowText = '', gap = '', highText = ''] = m;
    const low = Number(lowText);
    const high = Number(highText);
    if (low < FRACTION_LOWEST || high > 1 || low >= high || !saysSaturation(text, m.index, false)) {
      continue;
    }
    // 0.94 is 94 %; rounding keeps two-place fractions exact (0.94 * 100 is 93.99999999999999).
    const range = { lowPercent: Math.round(low * 100), highPercent: Math.round(high * 100) };
    if (!plausible(range.lowPercent) || !plausible(range.highPercent)) {
      continue;
    }
    const end = m.index + whole.length;
    mentions.push({
      range,
      start: m.index,
      end,
      lowStart: m.index,
      lowEnd: m.index + lowText.length,
      highStart: m.index + lowText.length + gap.length,
      highEnd: end,
      conditional: isConditional(text, m.index, end),
      fraction: true,
    });
  }
  return mentions.sort((a, b) => a.start - b.start);
}

/** Whether the clause before `index` ends in a target word and only saturation words after it. */
function followsTargetWord(text: string, index: number): boolean {
  const before = clauseBefore(text, index).slice(-40);
  const last = allMatches(TARGET_WORD, before).at(-1);
  if (last === undefined || TRIGGER.test(before)) {
    return false;
  }
  return TARGET_TO_NUMBER.test(before.slice(last.index + last[0].length));
}

/**
 * Targets written as one number ("target SpO2 94%", "aim sats 94"): a target word, then only
 * saturation words, then a number with no bound word and no second number. Numbers inside ranges and
 * bounds already read are not single values.
 */
export function findSingleValueMentions(
  text: string,
  taken: readonly { readonly start: number; readonly end: number }[],
): readonly SingleValueMention[] {
  if (!DIGIT.test(text)) return [];
  const found: SingleValueMention[] = [];
  for (const m of allMatches(SINGLE, text)) {
    const percent = Number(m[1]);
    const start = m.index;
    const end = start + m[0].length;
    if (!plausible(percent) || taken.some((t) => start < t.end && end > t.start)) {
      continue;
    }
    const after = text.slice(start + (m[1] ?? '').length, start + (m[1] ?? '').length + 20);
    if (NOT_SINGLE_AFTER.test(after) || !SATURATION_UNIT_FOLLOWS.test(text.slice(end))) {
      continue;
    }
    if (!followsTargetWord(text, start)) {
      continue;
    }
    found.push({ percent, start, end, conditional: isConditional(text, start, end) });
  }
  return found;
}

export interface BoundsFound {
  /** Single bounds stated as the target ("keep sats above 92"). */
  readonly targets: readonly BoundMention[];
  /** Bounds inside trigger clauses ("if SpO2 below 85 % call doctor"): a plan, not the target. */
  readonly triggers: readonly BoundMention[];
}

function boundOf(m: RegExpMatchArray): Bound {
  if (m[1] !== undefined) return 'at-least';
  if (m[2] !== undefined) return 'at-most';
  if (m[3] !== undefined) return 'above';
  return 'below';
}

export function findBoundMentions(text: string, ranges: readonly TargetMention[] = findTargetMentions(text)): BoundsFound {
  if (!DIGIT.test(text)) return { targets: [], triggers: [] };
  const targets: BoundMention[] = [];
  const triggers: BoundMention[] = [];
  for (const m of allMatches(BOUND, text)) {
    const percent = Number(m[5]);
    const start = m.index;
    const end = start + m[0].length;
    if (!plausible(percent) || ranges.some((r) => start < r.end && end > r.start)) {
      continue;
    }
    if (!saysSaturation(text, start, m[6] !== undefined)) {
      continue;
    }
    const mention = { bound: boundOf(m), percent, start, end, conditional: isConditional(text, start, end) };
    (TRIGGER.test(clauseBefore(text, start)) ? triggers : targets).push(mention);
  }
  return { targets, triggers };
}

/**
 * The ranges and bounds one text states. The setting reader (a "%" inside them is never a set FiO2)
 * and the target reader both need them, so the order reader finds them once per text and hands them
 * to both.
 */
export interface TargetStatements {
  readonly ranges: readonly TargetMention[];
  readonly bounds: BoundsFound;
}

export function findTargetStatements(text: string): TargetStatements {
  const ranges = findTargetMentions(text);
  return { ranges, bounds: findBoundMentions(text, ranges) };
}

/** The statement that there is no SpO2 target, if the text makes one. */
export function findNoTargetStatement(text: string): { readonly start: number; readonly end: number } | undefined {
  const m = NO_TARGET.exec(text);
  return m === null ? undefined : { start: m.index, end: m.index + m[0].length };
}

/** The first target range stated in `text`, if any. */
export function readTargetText(text: string): SaturationRange | undefined {
  return findTargetMentions(text)[0]?.range;
}

/** Whether a full range agrees with a single bound (a lower bound at or below its low end, etc.). */
export function rangeKeepsBound(range: SaturationRange, bound: Bound, percent: number): boolean {
  // ">" and "≥" are read alike: prescribers write "SpO2 > 94%" for a range starting at 94 (common practice).
  return bound === 'at-least' || bound === 'above' ? range.lowPercent >= percent : range.highPercent <= percent;
}

export interface WrittenTarget {
  /** The one range the words state; for an ambiguous text, the range that allows the most oxygen. */
  readonly range: SaturationRange | undefined;
  readonly note: TargetNote | undefined;
}

function sentenceAround(text: string, start: number, end: number): string {
  const from = start - clauseBefore(text, start).length;
  const sentence = text.slice(from, end + clauseAfter(text, end).length).trim();
  return sentence.length > 120 ? `${sentence.slice(0, 119)}…` : sentence;
}

function sameRange(a: SaturationRange, b: SaturationRange): boolean {
  return a.lowPercent === b.lowPercent && a.highPercent === b.highPercent;
}

/** The range that allows the most oxygen: the one whose upper end, then lower end, is highest. */
function mostOxygen(ranges: readonly SaturationRange[]): SaturationRange | undefined {
  return [...ranges].sort((a, b) => b.highPercent - a.highPercent || b.lowPercent - a.lowPercent)[0];
}

/**
 * A target written as one number, read only when the words state no range and no bound: one value
 * is a single-value note; two different values, or one with a condition, make the target ambiguous.
 */
function readSingleValue(
  singles: readonly { readonly mention: SingleValueMention; readonly quote: string }[],
): WrittenTarget {
  const [first] = singles;
  if (first === undefined) {
    return { range: undefined, note: undefined };
  }
  const text = [...new Set(singles.map((s) => s.quote))].join(' … ');
  const values = new Set(singles.map((s) => s.mention.percent));
  if (values.size > 1 || singles.some((s) => s.mention.conditional)) {
    return { range: undefined, note: { kind: 'ambiguous', ranges: [], text } };
  }
  return { range: undefined, note: { kind: 'single-value', percent: first.mention.percent, text } };
}

/**
 * Reads the target the order's words state, across all its texts. One clear range (however written)
 * is the target. A lower and an upper bound together ("above 88 and below 92") are that range. One
 * bound alone is a one-sided note; one number alone ("target SpO2 94%") a single-value note. Two different ranges, a condition, or bounds that contradict the
 * range make the target ambiguous: the note lists the ranges and the range returned is the one that
 * allows the most oxygen, so the hypercapnic-risk check still sees the reading that could harm.
 */
export function readWrittenTarget(
  texts: readonly string[],
  statements: readonly TargetStatements[] = texts.map(findTargetStatements),
): WrittenTarget {
  const ranges: SaturationRange[] = [];
  const bounds: { readonly mention: BoundMention; readonly text: string }[] = [];
  const quoted: string[] = [];
  const singles: { readonly mention: SingleValueMention; readonly quote: string }[] = [];
  let conditional = false;
  let noTarget: string | undefined;
  for (const [index, text] of texts.entries()) {
    const { ranges: found, bounds: boundsFound } = statements[index] ?? findTargetStatements(text);
    for (const m of found) {
      if (!ranges.some((r) => sameRange(r, m.range))) ranges.push(m.range);
      conditional ||= m.conditional;
      quoted.push(sentenceAround(text, m.start, m.end));
    }
    for (const mention of boundsFound.targets) {
      bounds.push({ mention, text });
      conditional ||= mention.conditional;
      quoted.push(sentenceAround(text, mention.start, mention.end));
    }
    for (const mention of findSingleValueMentions(text, [...found, ...boundsFound.targets, ...boundsFound.triggers])) {
      singles.push({ mention, quote: sentenceAround(text, mention.start, mention.end) });
    }
    const none = findNoTargetStatement(text);
    if (none !== undefined && noTarget === undefined) {
      noTarget = sentenceAround(text, none.start, none.end);
    }
  }
  const direction = (b: Bound): string => (b === 'at-least' || b === 'above' ? 'lower' : 'upper');
  const distinct = bounds.filter(
    (b, i) => bounds.findIndex((o) => direction(o.mention.bound) === direction(b.mention.bound) && o.mention.percent === b.mention.percent) === i,
  );
  bounds.length = 0;
  bounds.push(...distinct);
  const lower = bounds.filter((b) => b.mention.bound === 'at-least' || b.mention.bound === 'above');
  const upper = bounds.filter((b) => b.mention.bound === 'at-most' || b.mention.bound === 'below');
  const [onlyLower] = lower;
  const [onlyUpper] = upper;
  if (ranges.length === 0 && lower.length === 1 && upper.length === 1 && onlyLower !== undefined && onlyUpper !== undefined) {
    const pair = { lowPercent: onlyLower.mention.percent, highPercent: onlyUpper.mention.percent };
    if (pair.lowPercent < pair.highPercent) {
      ranges.push(pair);
      bounds.length = 0;
    }
  }
  const text = [...new Set(quoted)].join(' … ');
  if (noTarget !== undefined) {
    return ranges.length === 0 && bounds.length === 0
      ? { range: undefined, note: { kind: 'no-target', text: noTarget } }
      : { range: mostOxygen(ranges), note: { kind: 'ambiguous', ranges, text: `${noTarget} … ${text}` } };
  }
  const [single] = ranges;
  const boundsAgree = single !== undefined && bounds.every((b) => rangeKeepsBound(single, b.mention.bound, b.mention.percent));
  if (ranges.length > 1 || conditional || (single !== undefined && !boundsAgree)) {
    return { range: mostOxygen(ranges), note: { kind: 'ambiguous', ranges, text } };
  }
  if (single !== undefined) {
    return { range: single, note: undefined };
  }
  const [first] = bounds;
  if (first === undefined) {
    return readSingleValue(singles);
  }
  if (bounds.length > 1) {
    return { range: undefined, note: { kind: 'ambiguous', ranges: [], text } };
  }
  return {
    range: undefined,
    note: { kind: 'one-sided', bound: first.mention.bound, percent: first.mention.percent, text },
  };
}
