import type { MicroResult, Timing } from '../../../bench/micro.js';

/**
 * Invented micro-benchmark results for the tests of the page's rendering: no timing is taken, every
 * figure is given.
 */

export const inventedTiming = (p50Us: number): Timing => ({ iterations: 10, meanUs: p50Us, p50Us, p99Us: p50Us * 2 });

/** One example's target loops: JSON.parse and evaluateHook medians as given. */
export const inventedMicro = (name: string, parseUs: number, evaluateUs: number): MicroResult => ({
  name,
  requestBytes: 1000,
  cards: 2,
  baseline: inventedTiming(parseUs * 2),
  parseOnly: inventedTiming(parseUs),
  evaluate: inventedTiming(evaluateUs),
  wholePath: inventedTiming(evaluateUs * 1.2),
});

export interface PhaseMedians {
  readonly parse: number;
  readonly facts: number;
  readonly factsAndRules: number;
  readonly evaluate: number;
}

/**
 * One example with a phase pass of the medians given. Its target loops read a little differently, as
 * two passes' medians do, so a test can tell which of the two the page read.
 */
export function inventedPhased(name: string, us: PhaseMedians): MicroResult {
  return {
    ...inventedMicro(name, us.parse + 1, us.evaluate + 7),
    wholePath: inventedTiming(us.evaluate * 2),
    phases: {
      parseOnly: inventedTiming(us.parse),
      facts: inventedTiming(us.facts),
      factsAndRules: inventedTiming(us.factsAndRules),
      evaluate: inventedTiming(us.evaluate),
    },
  };
}
