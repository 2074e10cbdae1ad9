import { describe, expect, it } from 'vitest';
import { mixingFio2 } from '../../../src/core/devices/mixing.js';
import { estimateSimpleFaceMask, simpleFaceMaskEnvelope, simpleFaceMaskModel } from '../../../src/core/devices/simple-face-mask.js';
import { expectWithin, okValue } from './expect-helpers.js';

const atRest = (flowLPerMin: number) => okValue(estimateSimpleFaceMask({ flowLPerMin, respRatePerMin: 20 }));

describe('simple face mask', () => {
  it('covers 5-10 L/min', () => {
    // BTS 2017, Table 2
    expect(simpleFaceMaskModel.flowRangeLPerMin).toStrictEqual({ min: 5, max: 10 });
  });

  it('mixes 6 L/min against a 30 L/min mean inspiratory flow to 0.368', () => {
    // check-values 2b: Q 6, V̇insp 30 → 0.368 (derived from the mass balance), ± 0.001
    expectWithin(atRest(6).fio2.estimate, 0.368, 0.001);
  });

  it.each([5, 6, 8, 10])('stays within the quoted 0.35-0.60 at %i L/min', (flow) => {
    // Therapeutic Guidelines (Australia); common teaching: 5-10 L/min gives 0.35-0.60 (V2 / common practice), ± 0.05
    const { estimate } = atRest(flow).fio2;
    expect(estimate).toBeGreaterThanOrEqual(0.35 - 0.05);
    expect(estimate).toBeLessThanOrEqual(0.6 + 0.05);
  });

  it.each([
    // Therapeutic Guidelines (Australia): 0.35-0.60 over 5-10 L/min (V2), ± 0.05, read linearly by flow
    { flow: 5, low: 0.3, high: 0.4 },
    { flow: 8, low: 0.45, high: 0.55 },
    { flow: 10, low: 0.55, high: 0.65 },
  ])('keeps $flow L/min within its published envelope $low-$high', ({ flow, low, high }) => {
    const envelope = simpleFaceMaskEnvelope(flow);
    expectWithin(envelope.low, low, 1e-9);
    expectWithin(envelope.high, high, 1e-9);
    const { fio2 } = okValue(estimateSimpleFaceMask({ flowLPerMin: flow, respRatePerMin: 10 }));
    expect(fio2.high).toBeLessThanOrEqual(high + 1e-9);
  });

  it('takes its range from 0.6 L and 0.4 L breaths at the same rate', () => {
    // mass balance: V̇insp = VT × RR × 3 → 36 and 24 L/min at RR 20 (derived); at 5 L/min both lie inside
    // the published 0.35 ± 0.05 (Therapeutic Guidelines, V2)
    const { low, high } = atRest(5).fio2;
    expectWithin(low, mixingFio2(5, 36), 1e-12);
    expectWithin(high, mixingFio2(5, 24), 1e-12);
  });

  it('falls with tachypnoea', () => {
    // mass balance: a faster rate raises V̇insp and dilutes the same flow
    const fast = okValue(estimateSimpleFaceMask({ flowLPerMin: 5, respRatePerMin: 32 }));
    expect(fast.fio2.estimate).toBeLessThan(atRest(5).fio2.estimate);
    expect(fast.notes.join(' ')).toContain('Breathing faster than 30/min');
  });

  it('warns of rebreathing below 5 L/min', () => {
    // Jensen et al., Acta Anaesthesiol Scand 35:289 (1991): minute ventilation ≈ 140 % at 3 L/min
    const value = atRest(3);
    expect(value.notes).toContain(
      'Below 5 L/min a face mask is rebreathed: minute ventilation rose to about 140 % at 3 L/min (Jensen 1991).',
    );
    expect(value.sourceKeys).toStrictEqual(['device-mixing', 'bts-2017', 'jensen-1991', 'device-fio2-tables']);
    expect(atRest(5).sourceKeys).toStrictEqual(['device-mixing', 'bts-2017', 'device-fio2-tables']);
  });

  it('flags the estimate for P/F and A-a use', () => {
    // check-values pitfall 9
    expect(atRest(6).notes[0]).toContain('P/F');
    expect(atRest(6).fixedPerformance).toBe(false);
  });

  describe('edge cases', () => {
    it('needs a flow and refuses an impossible one', () => {
      expect(estimateSimpleFaceMask({})).toMatchObject({ kind: 'unknown', missing: ['flowLPerMin'] });
      expect(estimateSimpleFaceMask({ flowLPerMin: Number.NaN }).kind).toBe('unknown');
    });

    it('still estimates above 10 L/min, with a note', () => {
      // Therapeutic Guidelines (V2): 0.60 at 10 L/min ± 0.05; nothing is published above 10 L/min
      const value = atRest(12);
      expect(value.fio2.estimate).toBeGreaterThanOrEqual(0.6 - 0.05);
      expect(value.fio2.high).toBeLessThanOrEqual(0.6 + 0.05);
      expect(value.envelope.basis).toContain('above 10 L/min nothing is published');
      expect(value.notes.join(' ')).toContain('12 L/min is above the usual 5-10 L/min');
    });
  });
});
