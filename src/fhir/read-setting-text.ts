import type { DeviceKind } from '../core/types.js';
import { convertUnit } from '../units/convert.js';
import { tidyNumber } from './json.js';
import { isOutsideTheOrder } from './read-device-text.js';
import { DIGIT, findTargetStatements, type TargetStatements } from './read-target-text.js';
import { allMatches } from '../text/all-matches.js';

/**
 * Finds the oxygen flow and set FiO2 written in order words: "2 L/min", "2L", "15 litres per minute",
 * "40L"; "FiO2 0.45", "FiO2 45%", and a bare "28%" or "60%" when the device takes a set FiO2
 * (Venturi, high-flow, CPAP/NIV, tracheostomy mask) or the words say oxygen ("35% O2"), and the
 * Venturi shorthand "V28" / "VM 28".
 */

export interface FlowMention {
  readonly start: number;
  readonly end: number;
  /** A single flow, or undefined when the text gives a range such as "1-2 L/min". */
  readonly flowLPerMin: number | undefined;
  readonly range: { readonly low: number; readonly high: number } | undefined;
  /** Offsets of the number (or of the whole range) to rewrite. */
  readonly valueStart: number;
  readonly valueEnd: number;
}

export interface Fio2Mention {
  readonly start: number;
  readonly end: number;
  readonly fraction: number;
  /** How the writer put it, so a rewrite keeps the style. */
  readonly style: 'percent' | 'fraction';
  readonly valueStart: number;
  readonly valueEnd: number;
}

const LITRES = String.raw`\s*(?:L|litres?|liters?|lpm)(?:\s*\/\s*min(?:ute)?|\s*per\s*min(?:ute)?)?(?![a-z])`;
const NUMBER = String.raw`(?<![\d.])(\d+(?:\.\d+)?)`;
const FLOW_RANGE = new RegExp(String.raw`${NUMBER}\s*(?:-|–|—|to)\s*(\d+(?:\.\d+)?)${LITRES}`, 'gi');
const FLOW = new RegExp(`${NUMBER}${LITRES}`, 'gi');
// "FiO2 60-80%" is a titration range, not a setting, so a number followed by a range is skipped.
const FIO2_KEYWORD = /\bfi\s?[o0]2\s*(?:of|=|:|at|set to|set at)?\s*(\d+(?:\.\d+)?|\.\d+)(?![\d.])(?!\s*%?\s*(?:-|–|—|to)\s*\d)(\s*%)?/gi;
// Either end of a range ("60-80%") is not a setting.
/** Venturi shorthand that carries the setting: "V28", "VM 28". */
const VENTURI_SHORTHAND = /\bV(?:M ?)?(24|28|31|35|40|50|60)\b(?!\s*%)/gi;
const PERCENT = /(?<![\d.])(?<!\d\s*%?\s*(?:-|–|—|\bto)\s*)(\d{2,3}(?:\.\d+)?)\s*%(?!\s*(?:-|–|—|to)\s*\d)/g;
// A saturation word with no oxygen word and no other "%" between it and the number: "SpO2 < 88%".
const SATURATION_BEFORE = /\b(?:spo2|sp02|sao2|sats?|saturations?|target|aim)\b(?!.*\b(?:venturi|fi[o0]2|oxygen|o2)\b)[^%]*$/i;
const OXYGEN_AROUND = { before: /\b(?:oxygen|O2)\s*(?:at)?\s*$/i, after: /^\s*(?:O2|oxygen)\b/i };
const SET_FIO2_DEVICES: ReadonlySet<DeviceKind> = new Set([
  'venturi-mask',
  'high-flow-nasal-cannula',
  'cpap-niv',
  'tracheostomy-mask',
]);

export function findFlowMentions(text: string): readonly FlowMention[] {
  if (!DIGIT.test(text)) return [];
  const mentions: FlowMention[] = [];
  for (const m of allMatches(FLOW_RANGE, text)) {
    const low = Number(m[1]);
    const high = Number(m[2]);
    const valueEnd = m.index + m[0].search(/\s*(?:L|litre|liter|lpm)/i);
    mentions.push({
      start: m.index,
      end: m.index + m[0].length,
      flowLPerMin: undefined,
      range: { low, high },
      valueStart: m.index,
      valueEnd,
    });
  }
  for (const m of allMatches(FLOW, text)) {
    const start = m.index;
    if (mentions.some((r) => start >= r.start && start < r.end)) {
      continue;
    }
    const number = m[1] ?? '';
    mentions.push({
      start,
      end: start + m[0].length,
      flowLPerMin: Number(number),
      range: undefined,
      valueStart: start,
      valueEnd: start + number.length,
    });
  }
  return mentions.sort((a, b) => a.start - b.start);
}

function fractionOf(value: number, style: 'percent' | 'fraction'): number | undefined {
  const converted = convertUnit(value, style === 'percent' ? '%' : '1', '1');
  return converted.kind === 'ok' ? tidyNumber(converted.value) : undefined;
}

export function findFio2Mentions(
  text: string,
  device: DeviceKind | undefined,
  statements: TargetStatements = findTargetStatements(text),
): readonly Fio2Mention[] {
  if (!DIGIT.test(text)) return [];
  const mentions: Fio2Mention[] = [];
  for (const m of allMatches(FIO2_KEYWORD, text)) {
    const number = m[1] ?? '';
    const value = Number(number);
    // "FiO2 45" without a sign is a percent; "FiO2 0.45" a fraction.
    const style = m[2] !== undefined || value > 1 ? 'percent' : 'fraction';
    const fraction = fractionOf(value, style);
    const valueStart = m.index + m[0].lastIndexOf(number);
    if (fraction !== undefined) {
      const end = m.index + m[0].length;
      mentions.push({ start: m.index, end, fraction, style, valueStart, valueEnd: valueStart + number.length });
    }
  }
  for (const m of allMatches(VENTURI_SHORTHAND, text)) {
    const number = m[1] ?? '';
    const fraction = fractionOf(Number(number), 'percent');
    const valueStart = m.index + m[0].length - number.length;
    if (fraction !== undefined) {
      const end = m.index + m[0].length;
      const valueEnd = valueStart + number.length;
      mentions.push({ start: m.index, end, fraction, style: 'percent', valueStart, valueEnd });
    }
  }
  const { ranges, bounds } = statements;
  // A saturation written as a range or a bound ("≥ 92 %", "if SpO2 below 85 %") is never a setting.
  const targets = [...ranges, ...bounds.targets, ...bounds.triggers];
  for (const m of allMatches(PERCENT, text)) {
    const start = m.index;
    const end = start + m[0].length;
    const inOther = [...mentions, ...targets].some((o) => start < o.end && end > o.start);
    const before = text.slice(Math.max(0, start - 24), start);
    const after = text.slice(end, end + 10);
    const oxygenWords = OXYGEN_AROUND.before.test(before) || OXYGEN_AROUND.after.test(after);
    const deviceTakesSetting = device !== undefined && SET_FIO2_DEVICES.has(device);
    if (inOther || SATURATION_BEFORE.test(before) || !(oxygenWords || deviceTakesSetting)) {
      continue;
    }
    const number = m[1] ?? '';
    const fraction = fractionOf(Number(number), 'percent');
    if (fraction !== undefined) {
      const valueEnd = start + number.length;
      mentions.push({ start, end, fraction, style: 'percent', valueStart: start, valueEnd });
    }
  }
  return mentions.sort((a, b) => a.start - b.start);
}

/**
 * Words just before a value that make it a step of change, not a setting: "wean oxygen by 0.5 L/min",
 * "decrease by 1L", "step down by 1L", "in steps of 1 L/min", "increments of 2L", "every 1 L/min".
 * "by" counts only after a word of change within a few words ("Oxygen by 24% Venturi mask" names
 * the device and its setting), and "of" only after a step word ("a flow of 2 L/min" is a setting).
 */
const STEP_BEFORE = new RegExp(
  String.raw`(?:\b(?:wean|reduc|decreas|increas|lower|rais|titrat|drop|step|adjust|turn|cut|down|up)\w*` +
    String.raw`(?:\s+(?!by\b)[\w/%.]+){0,3}\s+by|\b(?:steps?|increments?|decrements?|amounts?|reductions?|aliquots?)\s+of|\bevery)` +
    String.raw`\s*(?:about\s+|approx(?:imately|\.)?\s+|up to\s+|~\s*)?$`,
  'i',
);
/** Words just after a value that make it a step: "0.5 L/min steps", "1L at a time", "2L increments". */
const STEP_AFTER =
  /^\s*(?:steps?|increments?|decrements?|reductions?|at a time|each time|per step|a step|stepwise)\b/i;

/**
 * True when the value at `start`..`end` is the size of a step in a plan to wean or titrate, not the
 * order's own setting ("Wean by 0.5 L/min steps to off" orders no flow of 0.5 L/min). Like history
 * and plans (isOutsideTheOrder), a step is never read as the order, nor rewritten as if it were.
 */
export function isStepSize(text: string, mention: { readonly start: number; readonly end: number }): boolean {
  return STEP_BEFORE.test(text.slice(0, mention.start)) || STEP_AFTER.test(text.slice(mention.end));
}

/** True when a flow or FiO2 mention is what the order sets: neither history, plan nor a step size. */
export function isOrderedSetting(text: string, mention: { readonly start: number; readonly end: number }): boolean {
  return !isOutsideTheOrder(text, mention.start) && !isStepSize(text, mention);
}

export interface SettingTextRead {
  readonly flowLPerMin: number | undefined;
  readonly flowRange: { readonly low: number; readonly high: number } | undefined;
  readonly setFio2Fraction: number | undefined;
}

/**
 * The flow and set FiO2 the text orders (history and plans, e.g. "escalate to 15L", and step sizes,
 * e.g. "wean by 0.5 L/min steps", are skipped).
 */
export function readSettingText(
  text: string,
  device: DeviceKind | undefined,
  statements: TargetStatements = findTargetStatements(text),
): SettingTextRead {
  const flow = findFlowMentions(text).find((m) => isOrderedSetting(text, m));
  const fio2 = findFio2Mentions(text, device, statements).find((m) => isOrderedSetting(text, m));
  return {
    flowLPerMin: flow?.flowLPerMin,
    flowRange: flow?.range,
    setFio2Fraction: fio2?.fraction,
  };
}
