import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  DELIVERY_MODELS,
  envelopeAtFlow,
  keepWithinEnvelope,
  thresholdFio2For,
} from '../../../src/core/devices/delivery-estimate.js';
import { DEVICE_MODELS, VENTURI_SETTINGS, estimateDelivery } from '../../../src/core/devices/index.js';
import type { DeliveryEstimate } from '../../../src/core/devices/index.js';
import { DEVICE_KINDS } from '../../../src/core/types.js';
import type { DeviceKind } from '../../../src/core/types.js';
import { okValue } from './expect-helpers.js';

/** Floating-point slack for comparisons with the published figures (not a clinical tolerance). */
const EPS = 1e-9;

/**
 * The published figures, written here from check-values §2a independently of the code's constants.
 * Each returns the widest FiO2 the sources allow at that flow or setting.
 */
function publishedBounds(kind: DeviceKind, flow: number, set: number | undefined): { low: number; high: number } {
  switch (kind) {
    case 'nasal-cannula': {
      // FCCS (SCCM 2016) "rule of 4": 0.20 + 0.04 × L/min over 1-6 L/min, ± 0.05 (C / V2);
      // measured tracheal FiO2 rises 2.5-3.8 % per L/min (check-values pitfall 9, V2).
      const q = Math.min(6, Math.max(1, flow));
      const low = flow < 1 ? 0.21 : Math.min(0.2 + 0.04 * q - 0.05, 0.21 + 0.025 * q);
      return { low: Math.max(0.21, low), high: 0.2 + 0.04 * q + 0.05 };
    }
    case 'simple-face-mask':
      // Therapeutic Guidelines (Australia), Respiratory: 0.35-0.60 at 5-10 L/min (V2), ± 0.05
      return { low: flow < 5 ? 0.21 : 0.35 - 0.05, high: 0.6 + 0.05 };
    case 'reservoir-mask':
      // Therapeutic Guidelines; teaching pages: 0.60-0.90 at 10-15 L/min (V2), ± 0.1
      return { low: flow < 10 ? 0.21 : 0.6 - 0.1, high: 1 };
    case 'tracheostomy-mask':
      // ICS/NTSP tracheostomy guidance as quoted: up to about 0.6 (V2 / from memory)
      return { low: 0.21, high: 0.6 };
    case 'venturi-mask': {
      // Jones, Turner & Hughes, Lancet 1984 (V): 24-40 % within 1.9 % absolute; 60 % measured 50.3 %.
      // Minimum flows: BTS 2017 Table 4 (24 %, 28 %); device labelling, common practice (others).
      const setting = VENTURI_SETTINGS.find((s) => Math.abs(s.fio2Fraction - (set ?? 0)) < 0.005);
      const f = setting?.fio2Fraction ?? 0;
      const belowMinimum = setting === undefined || flow < setting.minimumFlowLPerMin;
      const shortfall = f > 0.4 ? 0.6 - 0.503 : 0.019;
      return { low: belowMinimum ? 0.21 : f - shortfall, high: f + 0.019 };
    }
    case 'high-flow-nasal-cannula':
      // Annual Update ICEM 2017, PMC5359952 (V): the blender FiO2 0.21-1.0 is delivered as set
      return { low: set ?? 0, high: set ?? 1 };
    case 'cpap-niv':
      // BTS/ICS 2016: the FiO2 set on the device; no published figure for bled-in oxygen (whole scale)
      return set === undefined ? { low: 0.21, high: 1 } : { low: set, high: set };
  }
}

const FLOW_MAX_L_PER_MIN = 70;
const validFlow = fc.double({ min: 0, max: FLOW_MAX_L_PER_MIN, noNaN: true });
const validRate = fc.option(fc.double({ min: 4, max: 60, noNaN: true }), { nil: undefined });
const settings = fc.option(fc.constantFrom(0.21, 0.24, 0.28, 0.31, 0.35, 0.4, 0.5, 0.6, 0.8, 1), { nil: undefined });

describe('delivered-FiO2 estimates', () => {
  it('lie inside the device envelope at every valid flow and respiratory rate, with low ≤ estimate ≤ high', () => {
    fc.assert(
      fc.property(fc.constantFrom(...DEVICE_KINDS), validFlow, validRate, settings, (kind, flow, rate, set) => {
        const outcome = estimateDelivery(kind, {
          flowLPerMin: flow,
          ...(set === undefined ? {} : { setFio2Fraction: set }),
          ...(rate === undefined ? {} : { respRatePerMin: rate }),
        });
        if (outcome.kind === 'unknown') {
          return;
        }
        const { fio2, envelope, thresholdFio2 } = outcome.value;
        expect(fio2.low).toBeLessThanOrEqual(fio2.estimate);
        expect(fio2.estimate).toBeLessThanOrEqual(fio2.high);
        expect(fio2.low).toBeGreaterThanOrEqual(envelope.low - EPS);
        expect(fio2.high).toBeLessThanOrEqual(envelope.high + EPS);
        expect(thresholdFio2.fraction).toBeGreaterThanOrEqual(fio2.low);
        expect(thresholdFio2.fraction).toBeLessThanOrEqual(fio2.high);
      }),
      { numRuns: 2000 },
    );
  });

  it('lie inside the published figures for the device, flow and setting', () => {
    fc.assert(
      fc.property(fc.constantFrom(...DEVICE_KINDS), validFlow, validRate, settings, (kind, flow, rate, set) => {
        const outcome = estimateDelivery(kind, {
          flowLPerMin: flow,
          ...(set === undefined ? {} : { setFio2Fraction: set }),
          ...(rate === undefined ? {} : { respRatePerMin: rate }),
        });
        if (outcome.kind === 'unknown') {
          return;
        }
        const usedSet = kind === 'nasal-cannula' || kind === 'simple-face-mask' || kind === 'reservoir-mask' ? undefined : set;
        const bounds = publishedBounds(kind, flow, kind === 'tracheostomy-mask' ? undefined : usedSet);
        expect(outcome.value.fio2.low).toBeGreaterThanOrEqual(bounds.low - EPS);
        expect(outcome.value.fio2.high).toBeLessThanOrEqual(bounds.high + EPS);
      }),
      { numRuns: 2000 },
    );
  });

  it('give thresholds the set FiO2 of a device that delivers its setting, else the low end', () => {
    fc.assert(
      fc.property(fc.constantFrom(...DEVICE_KINDS), validFlow, validRate, settings, (kind, flow, rate, set) => {
        const outcome = estimateDelivery(kind, {
          flowLPerMin: flow,
          ...(set === undefined ? {} : { setFio2Fraction: set }),
          ...(rate === undefined ? {} : { respRatePerMin: rate }),
        });
        if (outcome.kind === 'unknown') {
          return;
        }
        const value: DeliveryEstimate = outcome.value;
        if (value.fio2Source === 'estimated') {
          expect(value.thresholdFio2).toStrictEqual({ fraction: value.fio2.low, point: 'low-end' });
        } else {
          expect(value.thresholdFio2.point).toBe('set');
          expect(['venturi-mask', 'high-flow-nasal-cannula', 'cpap-niv']).toContain(kind);
        }
      }),
    );
  });

  it('name their model, never calling high flow, CPAP/NIV or a Venturi mask low-flow mixing', () => {
    // check-values 2a/2b: HFNC delivers the set FiO2; a Venturi mask is fixed-performance air entrainment
    const hfnc = okValue(estimateDelivery('high-flow-nasal-cannula', { flowLPerMin: 50, setFio2Fraction: 0.5 }));
    const cpap = okValue(estimateDelivery('cpap-niv', { setFio2Fraction: 0.4 }));
    const venturi = okValue(estimateDelivery('venturi-mask', { flowLPerMin: 4, setFio2Fraction: 0.28 }));
    for (const value of [hfnc, cpap, venturi]) {
      expect(value.model.kind).not.toBe('low-flow-mixing');
      expect(value.sourceKeys[0]).toBe(value.model.sourceKey);
      expect(value.sourceKeys).not.toContain('device-mixing');
    }
    expect(venturi.model.name).toContain('air-entrainment');
    expect(hfnc.model.name).toContain('blender setting');
    for (const kind of ['nasal-cannula', 'simple-face-mask', 'reservoir-mask', 'tracheostomy-mask'] as const) {
      const value = okValue(estimateDelivery(kind, { flowLPerMin: DEVICE_MODELS[kind].flowRangeLPerMin.min }));
      expect(value.sourceKeys[0]).toBe(value.model.sourceKey);
      expect(value.fio2Source).toBe('estimated');
    }
  });

  describe('a calm patient on 4 L/min by nasal cannula', () => {
    it.each([10, 12, 14, 16, 18, 20])('at %i/min stays within the rule of 4 and below a 0.40 threshold point', (rate) => {
      // FCCS rule of 4 (C / V2): 4 L/min ≈ 0.36 ± 0.05; BTS-based policy threshold for a high requirement 0.40
      const value = okValue(estimateDelivery('nasal-cannula', { flowLPerMin: 4, respRatePerMin: rate }));
      expect(value.fio2.estimate).toBeLessThanOrEqual(0.36 + 0.05 + EPS);
      expect(value.fio2.high).toBeLessThanOrEqual(0.36 + 0.05 + EPS);
      expect(value.thresholdFio2.fraction).toBeLessThan(0.4);
    });
  });

  describe('edge cases', () => {
    const spec = {
      publishedFlowLPerMin: { min: 2, max: 6 },
      at: (q: number) => ({ low: 0.2 + 0.02 * q, high: 0.3 + 0.02 * q }),
      basis: 'test figures',
    };

    it('uses the published figures inside the flow range', () => {
      const envelope = envelopeAtFlow(4, spec);
      expect(envelope.low).toBeCloseTo(0.28, 12);
      expect(envelope.high).toBeCloseTo(0.38, 12);
      expect(envelope.basis).toBe('test figures');
    });

    it('reaches down to room air below the flow range and keeps the top at the lowest published flow', () => {
      const envelope = envelopeAtFlow(1, spec);
      expect(envelope.low).toBe(0.21);
      expect(envelope.high).toBeCloseTo(0.34, 12);
      expect(envelope.basis).toContain('below 2 L/min nothing is published');
    });

    it('holds the figures at the top published flow above the range', () => {
      const envelope = envelopeAtFlow(10, spec);
      expect(envelope.low).toBeCloseTo(0.32, 12);
      expect(envelope.high).toBeCloseTo(0.42, 12);
      expect(envelope.basis).toContain('above 6 L/min nothing is published');
    });

    it('clamps a model range into the envelope without reordering it', () => {
      const envelope = { low: 0.3, high: 0.4, basis: 'test', sourceKey: 'device-fio2-tables' };
      expect(keepWithinEnvelope({ estimate: 0.47, low: 0.36, high: 0.53 }, envelope)).toStrictEqual({
        estimate: 0.4,
        low: 0.36,
        high: 0.4,
      });
      expect(keepWithinEnvelope({ estimate: 0.25, low: 0.22, high: 0.28 }, envelope)).toStrictEqual({
        estimate: 0.3,
        low: 0.3,
        high: 0.3,
      });
    });

    it('keeps a set point inside the range it belongs to', () => {
      expect(thresholdFio2For({ estimate: 0.55, low: 0.503, high: 0.619 }, 'set', 0.6)).toStrictEqual({
        fraction: 0.6,
        point: 'set',
      });
      expect(thresholdFio2For({ estimate: 0.3, low: 0.26, high: 0.3 }, 'estimated', 0.28)).toStrictEqual({
        fraction: 0.26,
        point: 'low-end',
      });
    });

    it('names every model with a reference key', () => {
      for (const model of Object.values(DELIVERY_MODELS)) {
        expect(model.name.length).toBeGreaterThan(0);
        expect(model.sourceKey.length).toBeGreaterThan(0);
      }
    });
  });
});
