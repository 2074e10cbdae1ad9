import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { DeviceKind } from '../../src/core/types.js';
import { findFio2Mentions, findFlowMentions } from '../../src/fhir/read-setting-text.js';
import {
  findBoundMentions,
  findSingleValueMentions,
  findTargetMentions,
  findTargetStatements,
} from '../../src/fhir/read-target-text.js';

/**
 * The target and setting readers do not search a text without a digit. That loses nothing only if
 * every range, bound, single value, flow and FiO2 they find holds a digit: checked here on texts made
 * of the ways prescribers write them (BTS 2017 target ranges, UK and Australian flow and FiO2
 * shorthand: common practice) with order words around them.
 */

const STATEMENTS = [
  'target SpO2 88-92%', 'aim sats 94–98 %', 'SpO2 94 to 98 percent', 'between 88 and 92 per cent', 'SpO2 target 0.94-0.98',
  'keep sats above 92', '≥ 92 %', 'at least 94%', 'sats not below 88', 'target SpO2 94%', 'aim sats 94',
  'if SpO2 below 85 % call doctor', '2 L/min', '2L', '15 litres per minute', '1-2 L/min', '0.5 L/min', '40L',
  'FiO2 0.45', 'FiO2 45%', 'FiO2 60-80%', 'fio2 .4', '28%', '35% O2', 'V28', 'VM 28', '60% mask',
];
const WORDS = [
  'Oxygen', 'Oxygen therapy', 'via', 'nasal cannula', 'Venturi', 'Venturi mask', 'HFNC', 'simple face mask', 'CPAP',
  'then', 'if drowsy', 'until the gas is back', 'wean by', 'steps', 'escalate to', 'home', 'no target', 'titrate to comfort',
  'room air', ',', '.', ';', 'FiO2', 'SpO2', 'sats', 'target', 'per cent', '%', '-', 'to',
];
const DEVICES: readonly (DeviceKind | undefined)[] = [undefined, 'venturi-mask', 'high-flow-nasal-cannula', 'nasal-cannula'];

const text = fc
  .array(fc.constantFrom(...STATEMENTS, ...WORDS), { minLength: 1, maxLength: 8 })
  .chain((parts) => fc.constantFrom(' ', ', ', '. ').map((gap) => parts.join(gap)));

/** Every span each reader finds in `t`. */
function spans(t: string, device: DeviceKind | undefined): { readonly start: number; readonly end: number }[] {
  const ranges = findTargetMentions(t);
  const bounds = findBoundMentions(t, ranges);
  return [
    ...ranges,
    ...bounds.targets,
    ...bounds.triggers,
    ...findSingleValueMentions(t, []),
    ...findFlowMentions(t),
    ...findFio2Mentions(t, device, findTargetStatements(t)),
  ];
}

describe('order text readers and digits', () => {
  it('find a digit in every statement and setting they read', () => {
    let found = 0;
    fc.assert(
      fc.property(text, fc.constantFrom(...DEVICES), (t, device) => {
        for (const span of spans(t, device)) {
          found += 1;
          expect(t.slice(span.start, span.end)).toMatch(/\d/);
        }
      }),
      { numRuns: 2000 },
    );
    // The texts hold statements of every kind, so the check means something.
    expect(found).toBeGreaterThan(2000);
  });

  it('read nothing from a text without a digit, whatever its words', () => {
    fc.assert(
      fc.property(text, fc.constantFrom(...DEVICES), (t, device) => {
        const words = t.replace(/\d/g, '');
        expect(spans(words, device)).toStrictEqual([]);
      }),
      { numRuns: 500 },
    );
  });

  describe('edge cases', () => {
    it.each([
      ['target SpO2 88-92%', 'findTargetMentions'],
      ['SpO2 target 0.94-0.98', 'findTargetMentions'],
      ['keep sats above 92', 'findBoundMentions'],
      ['FiO2 0.45', 'findFio2Mentions'],
      ['V28', 'findFio2Mentions'],
      ['2 L/min', 'findFlowMentions'],
    ])('still reads %j (%s)', (t) => {
      expect(spans(`Oxygen via Venturi mask, ${t}`, 'venturi-mask').length).toBeGreaterThan(0);
    });
  });
});
