import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/flow-outside-device-range.js';
import type { DeviceKind } from '../../../src/core/types.js';
import { buildFacts, condition, oxygenOrder } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';
import { LARKSPUR_BAY_DEVICES, policyWithDevices } from '../devices/catalogue-policy.js';

const order = (device: DeviceKind, flowLPerMin: number) => [oxygenOrder({ device, flowLPerMin })];

describe('flow-outside-device-range', () => {
  it('runs on both hooks as a warning', () => {
    expect(rule.hooks).toStrictEqual(['order-select', 'order-sign']);
    expect(rule.defaultIndicator).toBe('warning');
  });

  it('suggests 5 L/min for a simple face mask at 3 L/min', () => {
    // BTS 2017, Table 2: simple face mask 5-10 L/min; Jensen 1991: rebreathing below 5 L/min
    const finding = onlyFinding(runRule(rule, buildFacts({ orders: order('simple-face-mask', 3) })));
    expect(finding.change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 5 });
    expect(finding.sourceKeys).toStrictEqual(['bts-2017', 'jensen-1991']);
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('Flow 3 L/min is below the usual 5–10 L/min for this device (Simple face mask)');
    expect(card.label).toBe('Set flow to 5 L/min');
  });

  it.each<[DeviceKind, number, boolean]>([
    ['nasal-cannula', 6, false], // BTS 2017, Tables 2 and 4: 1-6 L/min
    ['nasal-cannula', 7, true],
    ['nasal-cannula', 0.5, true],
    ['simple-face-mask', 5, false], // BTS 2017, Table 2: 5-10 L/min
    ['simple-face-mask', 10, false],
    ['simple-face-mask', 12, true],
    ['reservoir-mask', 15, false], // BTS 2017, Table 2: 15 L/min
  ])('%s at %s L/min is outside its range: %s', (device, flow, fires) => {
    const findings = runRule(rule, buildFacts({ orders: order(device, flow) }));
    expect(findings.length).toBe(fires ? 1 : 0);
    findings.forEach((f) => expectCardRenders(f));
  });

  it('offers no change above the range, where lowering the flow would lower the oxygen', () => {
    const finding = onlyFinding(runRule(rule, buildFacts({ orders: order('nasal-cannula', 8) })));
    expect(finding.values.direction).toBe('above');
    expect(finding.change).toBeUndefined();
  });

  describe('edge cases', () => {
    it('does not raise a mask flow for a patient at risk of hypercapnia', () => {
      const facts = buildFacts({ orders: order('simple-face-mask', 3), conditions: [condition('copd')] });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.change).toBeUndefined();
      expectCardRenders(finding);
    });

    it('still raises a nasal cannula below 1 L/min in an at-risk patient', () => {
      const facts = buildFacts({ orders: order('nasal-cannula', 0.5), conditions: [condition('copd')] });
      expect(onlyFinding(runRule(rule, facts)).change).toStrictEqual({ kind: 'set-flow', flowLPerMin: 1 });
    });

    it('says nothing of rebreathing for a nasal cannula below its range', () => {
      // BTS 2017, Tables 2 and 4: nasal cannula 1-6 L/min; rebreathing is a mask's problem (Jensen 1991)
      const card = expectCardRenders(onlyFinding(runRule(rule, buildFacts({ orders: order('nasal-cannula', 0.5) }))));
      expect(card.detail).not.toMatch(/rebreath/i);
      expect(card.detail).toContain('below the flows the device is usually run at in adults');
    });

    it('names rebreathing for a simple face mask below its range and dryness for a cannula above it', () => {
      // Jensen 1991 (V): a simple face mask rebreathes below 5 L/min; BTS 2017 (V): cannulae above 4 L/min poorly tolerated
      expect(expectCardRenders(onlyFinding(runRule(rule, buildFacts({ orders: order('simple-face-mask', 3) })))).detail).toContain('rebreathes exhaled gas');
      expect(expectCardRenders(onlyFinding(runRule(rule, buildFacts({ orders: order('nasal-cannula', 8) })))).detail).toContain('dry the nose');
    });

    it('is silent for a cannula at 0 L/min, and for stop and room-air orders', () => {
      // 0 L/min gives no oxygen: nothing to raise (common practice)
      expect(runRule(rule, buildFacts({ orders: order('nasal-cannula', 0) }))).toStrictEqual([]);
      for (const purpose of ['stop', 'room-air'] as const) {
        expect(runRule(rule, buildFacts({ orders: [oxygenOrder({ device: 'simple-face-mask', flowLPerMin: 3, purpose })] }))).toStrictEqual([]);
      }
    });

    it('keeps the card for comfort and weaning orders but never raises their flow', () => {
      // BTS 2017, Table 2: simple face mask 5-10 L/min
      for (const purpose of ['comfort', 'wean'] as const) {
        const finding = onlyFinding(runRule(rule, buildFacts({ orders: [oxygenOrder({ device: 'simple-face-mask', flowLPerMin: 3, purpose })] })));
        expect(finding.change).toBeUndefined();
        expectCardRenders(finding);
      }
    });

    it('leaves Venturi flows to venturi-flow-insufficient and ignores orders without a flow', () => {
      expect(runRule(rule, buildFacts({ orders: [oxygenOrder({ device: 'venturi-mask', setFio2Fraction: 0.28, flowLPerMin: 1 })] }))).toStrictEqual([]);
      expect(runRule(rule, buildFacts({ orders: [oxygenOrder({ flowLPerMin: undefined })] }))).toStrictEqual([]);
    });
  });
});

describe('flow-outside-device-range with a hospital device catalogue', () => {
  // The invented Larkspur Bay catalogue (tests/core/devices/catalogue-policy.ts): local limits inside
  // each device's published range (BTS 2017 Tables 2 and 4; the device models' sources), no CPAP/NIV.
  const policy = policyWithDevices(LARKSPUR_BAY_DEVICES);
  const LOCAL: readonly [DeviceKind, number, number][] = [
    ['nasal-cannula', 1, 4],
    ['simple-face-mask', 5, 8],
    ['reservoir-mask', 12, 15],
    ['tracheostomy-mask', 6, 12],
    ['high-flow-nasal-cannula', 20, 50],
  ];

  describe.each(LOCAL)('%s stocked at %s-%s L/min', (device, from, to) => {
    it.each([
      ['at its lower limit', from],
      ['inside its limits', (from + to) / 2],
      ['at its upper limit', to],
    ])('is silent %s', (_where, flow) => {
      expect(runRule(rule, buildFacts({ orders: order(device, flow) }), { policy })).toStrictEqual([]);
    });

    it('warns above its upper limit, offering no lower flow', () => {
      const finding = onlyFinding(runRule(rule, buildFacts({ orders: order(device, to + 1) }), { policy }));
      expect(finding.values.direction).toBe('above');
      expect(finding.values.deviceRange).toBe(`${from}–${to} L/min`);
      expect(finding.change).toBeUndefined();
      expectCardRenders(finding);
    });

    it("warns below its lower limit and offers the hospital's lower limit", () => {
      const finding = onlyFinding(runRule(rule, buildFacts({ orders: order(device, from - 0.5) }), { policy }));
      expect(finding.values.direction).toBe('below');
      expect(finding.change).toStrictEqual({ kind: 'set-flow', flowLPerMin: from });
      expectCardRenders(finding);
    });
  });

  it('warns for a nasal cannula at 5 L/min where the hospital keeps cannulae to 4, and not under the preset', () => {
    // BTS 2017, Tables 2 and 4: 1-6 L/min, poorly tolerated above about 4 L/min
    const card = expectCardRenders(onlyFinding(runRule(rule, buildFacts({ orders: order('nasal-cannula', 5) }), { policy })));
    expect(card.summary).toBe('Flow 5 L/min is above the usual 1–4 L/min for this device (Nasal cannula)');
    expect(runRule(rule, buildFacts({ orders: order('nasal-cannula', 5) }))).toStrictEqual([]);
  });

  it("checks a device the hospital does not stock against the model's range", () => {
    // CPAP/NIV bleed-in 1-15 L/min (from memory, devices/cpap-niv.ts): not stocked at Larkspur Bay
    expect(runRule(rule, buildFacts({ orders: order('cpap-niv', 12) }), { policy })).toStrictEqual([]);
    expect(onlyFinding(runRule(rule, buildFacts({ orders: order('cpap-niv', 20) }), { policy })).values.deviceRange).toBe('1–15 L/min');
  });
});
