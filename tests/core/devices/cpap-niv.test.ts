import { describe, expect, it } from 'vitest';
import { NIV_INTENTIONAL_LEAK_L_PER_MIN, cpapNivModel, estimateCpapNiv } from '../../../src/core/devices/cpap-niv.js';
import { mixingFio2 } from '../../../src/core/devices/mixing.js';
import { expectWithin, okValue } from './expect-helpers.js';

describe('CPAP or NIV', () => {
  it('uses the set FiO2 as given and says the device reading is the one to use', () => {
    // common practice: a blender or ventilator delivers its set FiO2 to a sealed interface
    const value = okValue(estimateCpapNiv({ setFio2Fraction: 0.4, respRatePerMin: 28 }));
    expect(value.fio2).toStrictEqual({ estimate: 0.4, low: 0.4, high: 0.4 });
    expect(value.fixedPerformance).toBe(true);
    expect(value.notes[0]).toContain('use the FiO2 set or displayed on the device');
    expect(value.sourceKeys).toStrictEqual(['bts-ics-2016']);
  });

  it('leaves the bleed-in flow aside when a set FiO2 is given', () => {
    const value = okValue(estimateCpapNiv({ setFio2Fraction: 0.35, flowLPerMin: 4 }));
    expect(value.fio2.estimate).toBe(0.35);
    expect(value.notes).toContain('The O2 flow was not used: the set FiO2 describes what the device delivers.');
  });

  it('estimates bled-in oxygen with a wide range when only a flow is given', () => {
    // mixing model (derived): 4 L/min against 30 L/min of breathing plus 30 L/min of leak (leak from memory)
    const value = okValue(estimateCpapNiv({ flowLPerMin: 4, respRatePerMin: 20 }));
    expectWithin(value.fio2.estimate, mixingFio2(4, 30 + NIV_INTENTIONAL_LEAK_L_PER_MIN.central), 1e-12);
    expectWithin(value.fio2.low, mixingFio2(4, 36 + NIV_INTENTIONAL_LEAK_L_PER_MIN.high), 1e-12);
    expectWithin(value.fio2.high, mixingFio2(4, 24), 1e-12);
    expect(value.fixedPerformance).toBe(false);
    expect(value.notes.join(' ')).toContain('P/F');
  });

  describe('edge cases', () => {
    it('needs a set FiO2 or a flow', () => {
      expect(estimateCpapNiv({ respRatePerMin: 20 })).toStrictEqual({
        kind: 'unknown',
        reason: 'The FiO2 of CPAP or NIV cannot be estimated without the set FiO2 or the O2 bleed-in flow.',
        missing: ['setFio2Fraction', 'flowLPerMin'],
      });
    });

    it('refuses an impossible set FiO2', () => {
      // 0.1 is below room air 0.21 (common practice)
      expect(estimateCpapNiv({ setFio2Fraction: 0.1 }).kind).toBe('unknown');
    });

    it('notes a bleed-in flow above a wall flowmeter', () => {
      // wall oxygen flowmeters read up to 15 L/min (common practice; BTS 2017 Table 2 uses 15 L/min as the top flow)
      expect(okValue(estimateCpapNiv({ flowLPerMin: 20 })).notes.join(' ')).toContain('20 L/min is above the usual 1-15 L/min');
      expect(cpapNivModel.label).toBe('CPAP or NIV');
    });
  });
});
