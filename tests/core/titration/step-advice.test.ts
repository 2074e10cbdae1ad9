import { describe, expect, it } from 'vitest';
import { deviceStepAdvice } from '../../../src/core/titration/step-advice.js';
import { oxygenOrder } from '../facts-builder.js';
import { LARKSPUR_BAY_DEVICES, policyWithDevices } from '../devices/catalogue-policy.js';

describe('deviceStepAdvice with a hospital device catalogue', () => {
  // Larkspur Bay stocks 24, 28, 35 and 60 % valves at 2, 4, 8 and 15 L/min (BTS 2017 Table 4 for 24 and
  // 28 %; device labelling, common practice, for 35 and 60 %), cannulae to 4 L/min, face masks 5-8 L/min
  const larkspur = policyWithDevices(LARKSPUR_BAY_DEVICES).devices;
  const venturi = (setFio2Fraction: number) => oxygenOrder({ device: 'venturi-mask', setFio2Fraction, flowLPerMin: 15 });

  it('names the next lower stocked valve, skipping one the hospital does not buy', () => {
    // 60 % -> 50 % under the standard valves (50 % at 12 L/min, from memory); 35 % at Larkspur Bay
    expect(deviceStepAdvice(venturi(0.6))).toContain('50 % at 12 L/min');
    expect(deviceStepAdvice(venturi(0.6), larkspur)).toContain('35 % at 8 L/min');
    expect(deviceStepAdvice(venturi(0.35), larkspur)).toContain('28 % at 4 L/min');
  });

  it("words the step off a reservoir mask in the hospital's flow limits", () => {
    // BTS 2017 Table 2: nasal cannulae up to 6 L/min, simple face mask 5-10 L/min; local limits 4 and 5-8
    expect(deviceStepAdvice(oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15 }))).toContain('nasal cannulae at 2–6 L/min or a simple face mask at 5–10 L/min');
    expect(deviceStepAdvice(oxygenOrder({ device: 'reservoir-mask', flowLPerMin: 15 }), larkspur)).toContain(
      'nasal cannulae at 2–4 L/min or a simple face mask at 5–8 L/min',
    );
  });
});
