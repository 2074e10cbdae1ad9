import ucum from '@lhncbc/ucum-lhc';

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

/** Returns the UCUM code for a unit as sent, or undefined when it is neither UCUM nor a known alias. */
export function normaliseUnit(unit: string): string | undefined {
  const trimmed = unit.trim();
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
  let result: ReturnType<typeof utils.convertUnitTo>;
  try {
    result = quietly(() => utils.convertUnitTo(from, value, to));
  } catch {
    return { kind: 'failed', reason: `cannot convert ${from} to ${to}` };
  }
  if (result.status !== 'succeeded' || result.toVal === null || !Number.isFinite(result.toVal)) {
    return { kind: 'failed', reason: `cannot convert ${from} to ${to}` };
  }
  return { kind: 'ok', value: result.toVal };
}

/** Convenience for callers that have already checked the units are convertible (e.g. kPa ↔ mm[Hg]). */
export function convertKnown(value: number, fromUnit: string, toUnit: string): number {
  const result = convertUnit(value, fromUnit, toUnit);
  if (result.kind === 'failed') {
    throw new Error(`unit conversion failed: ${result.reason}`);
  }
  return result.value;
}
