/**
 * Pure respiratory physiology for the oxygen checks: one calculation a file, each citing its source.
 * Pressures are mmHg, FiO2 and saturations fractions unless a name says Percent. Functions that
 * return a plain number throw a RangeError outside their documented range; check patient data with
 * `checkPhysiologyInputs` (or use the `Outcome`-returning functions) first.
 * Clinical basis: docs/basis/physiology.md.
 */
export * from './constants.js';
export * from './valid-ranges.js';
export * from './barometric-pressure.js';
export * from './inspired-po2.js';
export * from './alveolar-gas.js';
export * from './aa-gradient.js';
export * from './expected-aa-gradient.js';
export * from './pf-ratio.js';
export * from './sf-ratio.js';
export * from './oxygen-dissociation.js';
export * from './rox-index.js';
export * from './oxygen-content.js';
export * from './henderson-hasselbalch.js';
export * from './expected-bicarbonate.js';
export * from './blood-gas-interpretation.js';
export * from './hypoxaemia-mechanism.js';
