import { expect } from 'vitest';
import type { Outcome } from '../../../src/core/types.js';

/** Asserts |actual − expected| ≤ tolerance, the form check-values.md gives its tolerances in. */
export function expectWithin(actual: number | undefined, expected: number, tolerance: number): void {
  expect(actual).toBeTypeOf('number');
  expect(Math.abs((actual ?? Number.NaN) - expected)).toBeLessThanOrEqual(tolerance);
}

/** The value of an `ok` outcome; fails the test, showing the reason, for any other. */
export function okValue<T>(outcome: Outcome<T>): T {
  if (outcome.kind !== 'ok') {
    throw new Error(`expected an ok outcome, got unknown: ${outcome.reason}`);
  }
  return outcome.value;
}
