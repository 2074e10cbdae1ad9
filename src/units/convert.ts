import ucum, { type UcumUnit } from '@lhncbc/ucum-lhc';

/**
 * The one place units are converted: at the edge (FHIR reader, policy loader, CLI, card display),
 * through the UCUM library rather than a hand table, so kPa, mm[Hg], %, L/min and the rest all follow
 * the UCUM definitions.
 */

export type Conversion =
  | { readonly kind: 'ok'; readonly value: number }
  | { readonly kind: 'failed'; readonly reason: string };

/**
 * Display spellings that are not valid UCUM but that real systems send; mapped before UCUM sees them.
 * UCUM spells millimetres of mercury `mm[Hg]` and a fraction `1`.
 */
const ALIASES: Readonly<Record<string, string>> = {
  mmhg: 'mm[Hg]',
  'mm hg': 'mm[Hg]',
  torr: 'mm[Hg]',
  kpa: 'kPa',
  'l/min': 'L/min',
  lpm: 'L/min',
  'liters/min': 'L/min',
  'litres/min': 'L/min',
  'breaths/min': '/min',
  '{breaths}/min': '/min',
  'mmol/l': 'mmol/L',
  'meq/l': 'meq/L',
  'g/dl': 'g/dL',
  'g/l': 'g/L',
  percent: '%',
  fraction: '1',
  ratio: '1',
  '': '1',
};

const utils = ucum.UcumLhcUtils.getInstance();

/**
 * Runs a UCUM library call with its console output dropped. When its parser throws, the library
 * prints the unit string it was given with console.log (ucumLhcUtils.js, getSpecifiedUnit), which
 * would put request text on stdout, outside the service's structured and redacted log. The calls are
 * synchronous, so nothing else can log while console.log is swapped out.
 */
function quietly<T>(call: () => T): T {
  const log = console.log;
  console.log = () => undefined;
  try {
    return call();
  } finally {
    console.log = log;
  }
}

/**
 * A bounded memo of answers that depend only on unit strings. The UCUM library parses a unit string
 * on every call; a request names a handful of units over and over (every SpO2 in %, every flow in
 * L/min), so each string is looked up once. Senders choose the strings, so the memo is emptied when
 * it reaches its bound rather than growing with whatever they send.
 */
class UnitMemo<T> {
  readonly #answers = new Map<string, T>();
  constructor(private readonly bound: number) {}

  has(key: string): boolean {
    return this.#answers.has(key);
  }

  /** The remembered answer, or undefined when there is none. */
  peek(key: string): T | undefined {
    return this.#answers.get(key);
  }

  set(key: string, answer: T): void {
    if (this.#answers.size >= this.bound) {
      this.#answers.clear();
    }
    this.#answers.set(key, answer);
  }
}

/** Distinct unit strings (and unit pairs) remembered; far more than the service reads (about 30). */
const MEMO_BOUND = 1000;
const normalised = new UnitMemo<string | undefined>(MEMO_BOUND);
/** Unit pairs the library cannot convert between, whatever the value (e.g. L/min to g). */
const incommensurable = new UnitMemo<true>(MEMO_BOUND);

/** The library's parsed unit objects for a pair it converted on the plain ratio or offset scale. */
interface ParsedPair {
  readonly fromUnit: UcumUnit;
  readonly toUnit: UcumUnit;
}
/**
 * Pairs already converted once. `convertUnitTo` parses both unit strings on every call; its 'normal'
 * conversion then calls `toUnit.convertFrom(value, fromUnit)`, which reads the parsed units and
 * changes nothing, so later values are converted by that same call on the units parsed the first time:
 * the same arithmetic, without parsing the strings again.
 */
const parsedPairs = new UnitMemo<ParsedPair>(MEMO_BOUND);

/** Returns the UCUM code for a unit as sent, or undefined when it is neither UCUM nor a known alias. */
export function normaliseUnit(unit: string): string | undefined {
  const trimmed = unit.trim();
  // Looked up without a closure: this runs for every value read.
  const known = normalised.peek(trimmed);
  if (known !== undefined || normalised.has(trimmed)) {
    return known;
  }
  const answer = lookUpUnit(trimmed);
  normalised.set(trimmed, answer);
  return answer;
}

function lookUpUnit(trimmed: string): string | undefined {
  // Own keys only: a unit sent as `constructor` or `__proto__` must not find Object.prototype's.
  const lower = trimmed.toLowerCase();
  if (Object.hasOwn(ALIASES, lower)) {
    return ALIASES[lower];
  }
  // The UCUM library looks units up in plain objects too, and calls `constructor` valid; no UCUM
  // unit is named like an Object.prototype member.
  if (trimmed in Object.prototype) {
    return undefined;
  }
  try {
    const check = quietly(() => utils.validateUnitString(trimmed));
    return check.status === 'valid' ? (check.ucumCode ?? trimmed) : undefined;
  } catch {
    // The UCUM library throws on some strings (e.g. `toString`); to a caller that is "not a unit".
    return undefined;
  }
}

/** Converts `value` from one unit to another; both may be UCUM codes or the aliases above. */
export function convertUnit(value: number, fromUnit: string, toUnit: string): Conversion {
  const from = normaliseUnit(fromUnit);
  const to = normaliseUnit(toUnit);
  if (from === undefined) {
    return { kind: 'failed', reason: `'${fromUnit}' is not a UCUM unit` };
  }
  if (to === undefined) {
    return { kind: 'failed', reason: `'${toUnit}' is not a UCUM unit` };
  }
  if (from === to) {
    return { kind: 'ok', value };
  }
  // The failure and its wording are made only on failure: this runs for every value read.
  const pair = `${from}\u0000${to}`;
  if (incommensurable.has(pair)) {
    return cannotConvert(from, to);
  }
  const parsed = Number.isFinite(value) ? parsedPairs.peek(pair) : undefined;
  if (parsed !== undefined) {
    return fromParsed(parsed, value, from, to);
  }
  let result: ReturnType<typeof utils.convertUnitTo>;
  try {
    result = quietly(() => utils.convertUnitTo(from, value, to));
  } catch {
    return unitsFailed(pair, value, from, to);
  }
  if (result.status !== 'succeeded') {
    return unitsFailed(pair, value, from, to);
  }
  if (result.fromUnit !== undefined && result.toUnit !== undefined && isNormalConversion(result.fromUnit, result.toUnit)) {
    parsedPairs.set(pair, { fromUnit: result.fromUnit, toUnit: result.toUnit });
  }
  if (result.toVal === null || !Number.isFinite(result.toVal)) {
    return cannotConvert(from, to);
  }
  return { kind: 'ok', value: result.toVal };
}

function cannotConvert(from: string, to: string): Conversion {
  return { kind: 'failed', reason: `cannot convert ${from} to ${to}` };
}

/** With a finite value the library fails only on the units themselves, so such a pair is remembered. */
function unitsFailed(pair: string, value: number, from: string, to: string): Conversion {
  if (Number.isFinite(value)) {
    incommensurable.set(pair, true);
  }
  return cannotConvert(from, to);
}

/** Whether the library converts this pair by `toUnit.convertFrom` (no molar mass or charge needed). */
function isNormalConversion(fromUnit: UcumUnit, toUnit: UcumUnit): boolean {
  return utils.detectConversionType(fromUnit, toUnit) === 'normal';
}

/** What `convertUnitTo` answers for a finite value of a pair it has converted before. */
function fromParsed(parsed: ParsedPair, value: number, from: string, to: string): Conversion {
  let toVal: number;
  try {
    toVal = parsed.toUnit.convertFrom(value, parsed.fromUnit);
  } catch {
    return cannotConvert(from, to);
  }
  return Number.isFinite(toVal) ? { kind: 'ok', value: toVal } : cannotConvert(from, to);
}

/** Convenience for callers that have already checked the units are convertible (e.g. kPa ↔ mm[Hg]). */
export function convertKnown(value: number, fromUnit: string, toUnit: string): number {
  const result = convertUnit(value, fromUnit, toUnit);
  if (result.kind === 'failed') {
    throw new Error(`unit conversion failed: ${result.reason}`);
  }
  return result.value;
}
