import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import {
  conventionalFlowCeilingLPerMin,
  deviceTier,
  highestTier,
  isLowerTier,
  SUPPORT_TIERS,
  tierRank,
  tierShownByRecordedFlow,
} from '../../../src/core/devices/device-tier.js';
import { DEVICE_KINDS } from '../../../src/core/types.js';
import type { DeviceKind } from '../../../src/core/types.js';

const CONVENTIONAL: readonly DeviceKind[] = ['nasal-cannula', 'simple-face-mask', 'venturi-mask', 'reservoir-mask', 'tracheostomy-mask'];

describe('deviceTier', () => {
  it('puts every conventional device below high flow, and high flow below CPAP/NIV', () => {
    // Standard oxygen < high-flow oxygen < non-invasive ventilation (FLORALI trial arms, from memory;
    // the usual escalation ladder, common practice)
    for (const kind of CONVENTIONAL) {
      expect(deviceTier(kind)).toBe('conventional-oxygen');
      expect(isLowerTier(kind, 'high-flow')).toBe(true);
      expect(isLowerTier(kind, 'pressure-support')).toBe(true);
    }
    expect(isLowerTier('high-flow-nasal-cannula', 'pressure-support')).toBe(true);
    expect(isLowerTier('cpap-niv', 'high-flow')).toBe(false);
  });

  it('lets a change between conventional devices stand: a reservoir mask to a Venturi is not a lower tier', () => {
    // BTS 2017 Table 4: a CO2 retainer moves from an uncontrolled mask to a 28 % Venturi
    expect(isLowerTier('venturi-mask', deviceTier('reservoir-mask'))).toBe(false);
  });

  it('ranks tiers consistently with isLowerTier for every device and tier', () => {
    fc.assert(
      fc.property(fc.constantFrom(...DEVICE_KINDS), fc.constantFrom(...SUPPORT_TIERS), (kind, tier) => {
        expect(isLowerTier(kind, tier)).toBe(tierRank(deviceTier(kind)) < tierRank(tier));
        expect(isLowerTier(kind, deviceTier(kind))).toBe(false);
        expect(isLowerTier(kind, undefined)).toBe(false);
      }),
    );
  });

  it('takes the highest of several tiers, whatever their order', () => {
    fc.assert(
      fc.property(fc.array(fc.option(fc.constantFrom(...SUPPORT_TIERS), { nil: undefined })), (tiers) => {
        const best = highestTier(tiers);
        const present = tiers.filter((t) => t !== undefined);
        expect(best === undefined).toBe(present.length === 0);
        for (const tier of present) {
          expect(tierRank(tier)).toBeLessThanOrEqual(tierRank(best ?? 'pressure-support'));
        }
        expect(highestTier([...tiers].reverse())).toBe(best);
      }),
    );
  });

  describe('edge cases', () => {
    it('reads a recorded flow as high flow only above every conventional device range', () => {
      // Venturi 60 % at 15 L/min raised by half for tachypnoea: 22.5 L/min (BTS 2017 Table 4; check-values 2b)
      expect(conventionalFlowCeilingLPerMin()).toBe(22.5);
      expect(tierShownByRecordedFlow(22.5)).toBeUndefined();
      expect(tierShownByRecordedFlow(15)).toBeUndefined(); // reservoir mask, BTS 2017 Table 2
      expect(tierShownByRecordedFlow(45)).toBe('high-flow'); // HFNC median 45 L/min, Li 2021 (check-values 2a)
    });
  });
});
