import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { evaluateScenario } from '../scenarios/support/run-scenario.js';
import { adviceOf } from './support/advice.js';
import { anyCase, toScenario } from './support/generated-orders.js';

/**
 * A target written in any equivalent notation is read the same (issue 6 class 5; BTS 2017:
 * prescribe a target range): hyphen, en dash, em dash or minus sign, spaced or not, "to",
 * "between ... and ... percent", with or without "%", give the same cards as "target SpO2 88-92%".
 */

const NOTATIONS: readonly ((low: number, high: number) => string)[] = [
  (l, h) => `target SpO2 ${l}–${h} %`,
  (l, h) => `target SpO2 ${l}—${h}%`,
  (l, h) => `target SpO2 ${l}−${h}%`,
  (l, h) => `target SpO2 ${l} - ${h} %`,
  (l, h) => `target SpO2 ${l} to ${h}%`,
  (l, h) => `keep saturations between ${l} and ${h} percent`,
  (l, h) => `aim SpO2 ${l}-${h}`,
  (l, h) => `sats ${l}-${h}%`,
];

const withRange = anyCase.filter((g) => g.target !== undefined);

describe('every notation of a target range reads the same', () => {
  it('holds over generated orders and notations', () => {
    fc.assert(
      fc.property(withRange, fc.constantFrom(...NOTATIONS), (g, notation) => {
        const [low, high] = g.target ?? [0, 0];
        const plain = evaluateScenario(toScenario(g, { targetWords: `target SpO2 ${low}-${high}%` }));
        const written = evaluateScenario(toScenario(g, { targetWords: notation(low, high) }));
        expect(adviceOf(written.cards), notation(low, high)).toStrictEqual(adviceOf(plain.cards));
      }),
      { seed: 20261106, numRuns: 200 },
    );
  });
});
