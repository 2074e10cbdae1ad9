import { describe, expect, it } from 'vitest';
import {
  BUILT_IN_DEVICE_CATALOGUE,
  FLOW_LIMITED_DEVICE_KINDS,
  flowRangeFor,
  isStocked,
  stockedVenturiSetting,
  stockedVenturiSettings,
} from '../../../src/core/devices/catalogue.js';
import { DEVICE_MODELS, estimateVenturiMask, findVenturiSetting, VENTURI_SETTINGS } from '../../../src/core/devices/index.js';
import { DEVICE_KINDS } from '../../../src/core/types.js';
import { BTS, TSANZ } from '../facts-builder.js';
import { LARKSPUR_BAY_DEVICES, policyWithDevices, venturiLines } from './catalogue-policy.js';

describe('the built-in device catalogue', () => {
  it('stocks every device at its model range and every standard Venturi valve at its usual minimum', () => {
    for (const kind of FLOW_LIMITED_DEVICE_KINDS) {
      const { min, max } = DEVICE_MODELS[kind].flowRangeLPerMin;
      expect(BUILT_IN_DEVICE_CATALOGUE.flowLimits[kind]).toStrictEqual({ from: min, to: max });
    }
    expect(BUILT_IN_DEVICE_CATALOGUE.venturiSettings).toStrictEqual(
      VENTURI_SETTINGS.map((s) => ({ fio2Fraction: s.fio2Fraction, minimumFlowLPerMin: s.minimumFlowLPerMin })),
    );
    expect(DEVICE_KINDS.every((kind) => isStocked(BUILT_IN_DEVICE_CATALOGUE, kind))).toBe(true);
  });

  it('holds the published values: the same as before the catalogue existed', () => {
    // BTS 2017, Tables 2 and 4: nasal cannula 1-6 L/min, simple face mask 5-10 L/min; BTS 2017 Table 2
    // and BTS 2008: reservoir mask 10-15 L/min; adult high flow up to 60 L/min (PMC5359952)
    expect(BUILT_IN_DEVICE_CATALOGUE.flowLimits['nasal-cannula']).toStrictEqual({ from: 1, to: 6 });
    expect(BUILT_IN_DEVICE_CATALOGUE.flowLimits['simple-face-mask']).toStrictEqual({ from: 5, to: 10 });
    expect(BUILT_IN_DEVICE_CATALOGUE.flowLimits['reservoir-mask']).toStrictEqual({ from: 10, to: 15 });
    expect(BUILT_IN_DEVICE_CATALOGUE.flowLimits['high-flow-nasal-cannula']?.to).toBe(60);
    // BTS 2017 Table 4: 24 % at 2 L/min, 28 % at 4 L/min; device labelling (common practice): 31/35/40/60 %
    // at 6/8/10/15 L/min; 50 % at 12 L/min from memory
    expect(BUILT_IN_DEVICE_CATALOGUE.venturiSettings.map((s) => [s.fio2Fraction, s.minimumFlowLPerMin])).toStrictEqual([
      [0.24, 2],
      [0.28, 4],
      [0.31, 6],
      [0.35, 8],
      [0.4, 10],
      [0.5, 12],
      [0.6, 15],
    ]);
  });

  it('is what both presets write, and what a file without the section gets', () => {
    expect(BTS.devices).toStrictEqual(BUILT_IN_DEVICE_CATALOGUE);
    expect(TSANZ.devices).toStrictEqual(BUILT_IN_DEVICE_CATALOGUE);
    expect(policyWithDevices(undefined).devices).toStrictEqual(BUILT_IN_DEVICE_CATALOGUE);
  });
});

describe('a hospital catalogue', () => {
  const larkspur = policyWithDevices(LARKSPUR_BAY_DEVICES).devices;

  it('stocks only the kinds it lists', () => {
    expect(DEVICE_KINDS.filter((kind) => !isStocked(larkspur, kind))).toStrictEqual(['cpap-niv']);
    expect(isStocked(policyWithDevices(['devices:', '  reservoir-mask: { flowLPerMin: { from: 10, to: 15 } }']).devices, 'venturi-mask')).toBe(false);
  });

  it('gives its own limits for a stocked device and the model range for one it does not stock', () => {
    // Local limits invented for the Larkspur Bay catalogue; the model range of CPAP/NIV bleed-in 1-15 L/min
    // is from memory (devices/cpap-niv.ts)
    expect(flowRangeFor(larkspur, 'nasal-cannula')).toStrictEqual({ min: 1, max: 4, local: true });
    expect(flowRangeFor(larkspur, 'cpap-niv')).toStrictEqual({ min: 1, max: 15, local: false });
    // The Venturi mask's flows follow its valves: its model range, 2-22.5 L/min (1.5 x the 60 % valve's
    // 15 L/min, BTS 2017 Table 4), stands
    expect(flowRangeFor(larkspur, 'venturi-mask')).toStrictEqual({ min: 2, max: 22.5, local: false });
  });

  it('sorts its valves by setting, whatever order the file lists them in', () => {
    const shuffled = policyWithDevices([
      'devices:',
      '  reservoir-mask: { flowLPerMin: { from: 10, to: 15 } }',
      ...venturiLines([
        [60, 15],
        [24, 2],
        [35, 8],
      ]),
    ]).devices;
    expect(shuffled.venturiSettings.map((s) => s.fio2Fraction)).toStrictEqual([0.24, 0.35, 0.6]);
  });

  it('finds a stocked valve and none that is not stocked', () => {
    expect(stockedVenturiSetting(larkspur, 0.28)?.minimumFlowLPerMin).toBe(4); // BTS 2017, Table 4
    expect(stockedVenturiSetting(larkspur, 0.31)).toBeUndefined();
    expect(stockedVenturiSetting(larkspur, 0.4)).toBeUndefined();
  });

  it("keeps a printed minimum's published basis when it is the usual one, and names the hospital's valve otherwise", () => {
    // Invented labels: a 24 % valve printed 3 L/min lies within BTS 2017 Table 4's 2-3 L/min
    const local = policyWithDevices([
      'devices:',
      '  reservoir-mask: { flowLPerMin: { from: 10, to: 15 } }',
      ...venturiLines([
        [24, 3],
        [28, 4],
      ]),
    ]).devices;
    const [v24, v28] = stockedVenturiSettings(local);
    expect(v24?.minimumFlowBasis).toBe("this hospital's valve label (policy devices)");
    expect(v28?.minimumFlowBasis).toBe('BTS 2017');
  });

  it("gives each catalogue its own valves every time it is asked, and they cannot be changed", () => {
    // Invented labels: 28 % printed 4 L/min is BTS 2017 Table 4's; 5 L/min is this hospital's own
    const usual = policyWithDevices(['devices:', '  reservoir-mask: { flowLPerMin: { from: 10, to: 15 } }', ...venturiLines([[28, 4]])]).devices;
    const own = policyWithDevices(['devices:', '  reservoir-mask: { flowLPerMin: { from: 10, to: 15 } }', ...venturiLines([[28, 5]])]).devices;
    const first = stockedVenturiSettings(usual);
    expect(stockedVenturiSettings(usual)).toBe(first);
    expect(stockedVenturiSettings(own).map((s) => [s.minimumFlowLPerMin, s.minimumFlowBasis])).toStrictEqual([
      [5, "this hospital's valve label (policy devices)"],
    ]);
    expect(first.map((s) => [s.minimumFlowLPerMin, s.minimumFlowBasis])).toStrictEqual([[4, 'BTS 2017']]);
    expect(Object.isFrozen(first) && first.every((s) => Object.isFrozen(s))).toBe(true);
  });
});

describe('the Venturi model reads the stocked valves first', () => {
  // Invented label: a 24 % valve printed 3 L/min (BTS 2017 Table 4 gives 24 % at 2-3 L/min)
  const valves = [{ fio2Fraction: 0.24, minimumFlowLPerMin: 3, minimumFlowBasis: 'local label' }];

  it('takes the minimum flow printed on the valve', () => {
    const usual = estimateVenturiMask({ flowLPerMin: 2, setFio2Fraction: 0.24 });
    const local = estimateVenturiMask({ flowLPerMin: 2, setFio2Fraction: 0.24, venturiSettings: valves });
    expect(usual.kind === 'ok' && usual.value.minimumFlowLPerMin).toBe(2); // BTS 2017, Table 4
    expect(usual.kind === 'ok' && usual.value.fio2Source).toBe('set');
    expect(local.kind === 'ok' && local.value.minimumFlowLPerMin).toBe(3);
    // Below the valve's minimum entrainment is not assured: the FiO2 is an estimate (Jones 1984)
    expect(local.kind === 'ok' && local.value.fio2Source).toBe('estimated');
  });

  it('falls back to the usual minimum for a setting the hospital does not stock', () => {
    // Device labelling (common practice): 31 % at 6 L/min
    expect(findVenturiSetting(0.31, valves)?.minimumFlowLPerMin).toBe(6);
    const transferred = estimateVenturiMask({ flowLPerMin: 6, setFio2Fraction: 0.31, venturiSettings: valves });
    expect(transferred.kind === 'ok' && transferred.value.minimumFlowLPerMin).toBe(6);
  });
});
