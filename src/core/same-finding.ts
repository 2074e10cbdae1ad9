import type { Finding, OrderChange } from './types.js';

/**
 * Whether two findings say the same thing: the same rule about the same order, with the same values
 * and the same one-click change. Two subject orders' runs of the rules may make one patient-level
 * finding twice; the engine keeps it once. The version, indicator, workings and sources follow from
 * the rule and its values, so they do not tell two findings apart.
 *
 * Compared field by field rather than through `JSON.stringify`, which built a string of every
 * finding on every call; the values are flat strings and a change has at most four fields.
 */
export function sameFinding(a: Finding, b: Finding): boolean {
  return (
    a.ruleId === b.ruleId &&
    a.orderReference === b.orderReference &&
    sameValues(a.values, b.values) &&
    sameChange(a.change, b.change)
  );
}

function sameValues(a: Readonly<Record<string, string>>, b: Readonly<Record<string, string>>): boolean {
  const keys = Object.keys(a);
  if (keys.length !== Object.keys(b).length) {
    return false;
  }
  return keys.every((key) => Object.hasOwn(b, key) && a[key] === b[key]);
}

function sameChange(a: OrderChange | undefined, b: OrderChange | undefined): boolean {
  if (a === undefined || b === undefined) {
    return a === b;
  }
  switch (a.kind) {
    case 'set-target':
      return b.kind === 'set-target' && a.range.lowPercent === b.range.lowPercent && a.range.highPercent === b.range.highPercent;
    case 'set-flow':
      return b.kind === 'set-flow' && a.flowLPerMin === b.flowLPerMin;
    case 'set-device':
      return (
        b.kind === 'set-device' &&
        a.device === b.device &&
        a.flowLPerMin === b.flowLPerMin &&
        a.setFio2Fraction === b.setFio2Fraction
      );
    case 'stop-oxygen':
      return b.kind === 'stop-oxygen';
  }
}
