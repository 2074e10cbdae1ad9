import type { DeviceKind, SaturationRange } from '../core/types.js';
import { convertUnit } from '../units/convert.js';
import { tidyNumber } from './json.js';
import { findDeviceMentions, isOutsideTheOrder, readDeviceText } from './read-device-text.js';
import { findFio2Mentions, isOrderedSetting } from './read-setting-text.js';
import { findSingleValueMentions, findTargetStatements, type TargetStatements } from './read-target-text.js';
import { readFlows, type FlowsRead } from './text-readings.js';

/**
 * Rewrites the values an order's words state, keeping the writer's wording: "target SpO2 94-98%"
 * becomes "target SpO2 88-92%", "2L NC" becomes "4L NC". Only the span the reader read as the order's
 * value changes (read-order.ts reads the first flow and FiO2 outside history and plans, and every
 * statement of the target); every other character stays. Other values of the same kind (a contingency
 * "if SpO2 below 85 % ... increase to 4 L/min", an escalation "escalate to 15L NRB") are left as
 * written and listed, so the caller can mark the text for review. Each function says whether the
 * text stated the value at all.
 */

export interface Rewrite {
  readonly text: string;
  /** True when the text stated a value of this kind (whether or not it changed). */
  readonly stated: boolean;
  /** Other values of the same kind in the text, as written, that were not changed. */
  readonly leftAsWritten: readonly string[];
}

interface Edit {
  readonly start: number;
  readonly end: number;
  readonly with: string;
}

function applyEdits(text: string, edits: readonly Edit[]): string {
  let out = text;
  let limit = Number.POSITIVE_INFINITY;
  for (const edit of [...edits].sort((a, b) => b.start - a.start)) {
    if (edit.end > limit) {
      continue; // overlapping edit; the later one already rewrote this stretch
    }
    out = out.slice(0, edit.start) + edit.with + out.slice(edit.end);
    limit = edit.start;
  }
  return out;
}

/** Closes the gaps a removed phrase leaves: doubled spaces, a space before punctuation, a stray comma. */
function tidySpacing(text: string): string {
  return text
    .replace(/[ \t]{2,}/g, ' ')
    .replace(/\s+([,.;)])/g, '$1')
    .replace(/,\s*([,.;])/g, '$1')
    .replace(/^[\s,;]+/, '')
    .trim();
}

export function formatNumber(value: number): string {
  return String(tidyNumber(value));
}

export function formatPercent(fraction: number): string {
  const converted = convertUnit(fraction, '1', '%');
  return converted.kind === 'ok' ? formatNumber(converted.value) : formatNumber(fraction);
}

/** Plain words for a device kind, as they read inside a sentence. */
export const DEVICE_WORDS: Readonly<Record<DeviceKind, string>> = {
  'nasal-cannula': 'nasal cannula',
  'simple-face-mask': 'simple face mask',
  'venturi-mask': 'Venturi mask',
  'reservoir-mask': 'reservoir mask (non-rebreather)',
  'high-flow-nasal-cannula': 'high-flow nasal cannula',
  'tracheostomy-mask': 'tracheostomy mask',
  'cpap-niv': 'CPAP/NIV',
};

/** "28% Venturi mask" when the device takes a setting, else the plain words. */
export function deviceWords(device: DeviceKind, setFio2Fraction: number | undefined): string {
  const words = DEVICE_WORDS[device];
  if (device !== 'venturi-mask' || setFio2Fraction === undefined) {
    return words;
  }
  return `${formatPercent(setFio2Fraction)}% ${words}`;
}

/**
 * Rewrites every statement of the target: each range keeps its numbers' places and the writer's style;
 * a single bound ("above 92", "≥ 92 %") or a single value ("target SpO2 94%") becomes the range
 * ("88-92%"); a range in fractions stays in fractions. Trigger thresholds ("if SpO2
 * below 85 % call doctor") are left as written and listed.
 */
export function rewriteTarget(
  text: string,
  range: SaturationRange,
  statements: TargetStatements = findTargetStatements(text),
): Rewrite {
  const { ranges: mentions, bounds } = statements;
  // A single value is replaced only where no range or bound is written: then it is the target.
  const singles =
    mentions.length === 0 && bounds.targets.length === 0 ? findSingleValueMentions(text, bounds.triggers) : [];
  const written = `${range.lowPercent}-${range.highPercent}%`;
  // Fractions stay fractions: "0.94-0.98" becomes "0.88-0.92".
  const inStyle = (percent: number, fraction: boolean): string => (fraction ? (percent / 100).toFixed(2) : String(percent));
  const edits: Edit[] = [
    ...mentions.flatMap((m) => [
      { start: m.lowStart, end: m.lowEnd, with: inStyle(range.lowPercent, m.fraction) },
      { start: m.highStart, end: m.highEnd, with: inStyle(range.highPercent, m.fraction) },
    ]),
    ...bounds.targets.map((b) => ({ start: b.start, end: b.end, with: written })),
    ...singles.map((v) => ({ start: v.start, end: v.end, with: written })),
  ];
  return {
    text: applyEdits(text, edits),
    stated: edits.length > 0,
    leftAsWritten: bounds.triggers.map((b) => text.slice(b.start, b.end).trim()),
  };
}

/** Rewrites the flow the order states (the first outside history, plans and step sizes); lists the others. */
export function rewriteFlow(text: string, flowLPerMin: number, flows: FlowsRead = readFlows(text)): Rewrite {
  const { all, ordered: read } = flows;
  const edits = read === undefined ? [] : [{ start: read.valueStart, end: read.valueEnd, with: formatNumber(flowLPerMin) }];
  return {
    text: applyEdits(text, edits),
    stated: read !== undefined,
    leftAsWritten: all.filter((m) => m !== read).map((m) => text.slice(m.start, m.end).trim()),
  };
}

/**
 * Rewrites device words, the flow and the set FiO2 together; a FiO2 the new device does not take is
 * removed. Every mention of the ordered device is renamed (they all state it); only the flow and
 * FiO2 the reader reads change, and the others are listed.
 */
export function rewriteDevice(
  text: string,
  change: {
    readonly device: DeviceKind;
    readonly flowLPerMin: number;
    readonly setFio2Fraction?: number | undefined;
  },
  statements: TargetStatements = findTargetStatements(text),
  flows: FlowsRead = readFlows(text),
): Rewrite {
  const oldDevice = readDeviceText(text)?.device;
  const devices = findDeviceMentions(text).filter((m) => !isOutsideTheOrder(text, m.start));
  // A setting inside a device phrase ("28% mask") is rewritten with the phrase, not on its own.
  const allFio2s = findFio2Mentions(text, oldDevice, statements).filter((m) => !devices.some((d) => m.start < d.end && m.end > d.start));
  const readFio2 = allFio2s.find((m) => isOrderedSetting(text, m));
  const fio2s = readFio2 === undefined ? [] : [readFio2];
  const { all: allFlows, ordered: readFlow } = flows;
  const newFio2 = change.setFio2Fraction;
  const label = deviceWords(change.device, fio2s.length > 0 ? undefined : newFio2);
  const edits: Edit[] = [
    ...devices.map((m) => ({ start: m.start, end: m.end, with: label })),
    ...fio2s.map((m) =>
      newFio2 === undefined
        ? { start: m.start, end: m.end, with: '' }
        : {
            start: m.valueStart,
            end: m.valueEnd,
            with: m.style === 'percent' ? formatPercent(newFio2) : formatNumber(newFio2),
          },
    ),
    ...(readFlow === undefined
      ? []
      : [{ start: readFlow.valueStart, end: readFlow.valueEnd, with: formatNumber(change.flowLPerMin) }]),
  ];
  const rewritten = applyEdits(text, edits);
  const removedSomething = fio2s.length > 0 && newFio2 === undefined;
  const others = [...allFlows.filter((m) => m !== readFlow), ...allFio2s.filter((m) => m !== readFio2)];
  return {
    text: removedSomething ? tidySpacing(rewritten) : rewritten,
    stated: devices.length > 0 || fio2s.length > 0 || readFlow !== undefined,
    leftAsWritten: others.sort((a, b) => a.start - b.start).map((m) => text.slice(m.start, m.end).trim()),
  };
}
