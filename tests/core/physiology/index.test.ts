import { describe, expect, it } from 'vitest';
import * as physiology from '../../../src/core/physiology/index.js';

describe('physiology index', () => {
  // The module contracts in the team brief name these functions; other areas import them from here.
  it.each([
    'barometricPressureIsaMmHg',
    'barometricPressureWestMmHg',
    'siteBarometricPressureMmHg',
    'inspiredPo2MmHg',
    'alveolarPo2MmHg',
    'aaGradientMmHg',
    'expectedAaGradientMmHg',
    'expectedAaGradientMellemgaardMmHg',
    'pfRatioMmHg',
    'classifyPfBerlin',
    'sfRatio',
    'sfFromPfRice',
    'pfFromSfRice',
    'classifySfRice',
    'saturationFromPo2',
    'po2FromSaturationMmHg',
    'roxIndex',
    'interpretRox',
    'oxygenContentMlPerDl',
    'interpretBloodGas',
    'hypoxaemiaMechanism',
    'checkPhysiologyInputs',
  ])('re-exports %s', (name) => {
    expect(typeof (physiology as Record<string, unknown>)[name]).toBe('function');
  });

  it('re-exports the cited constants', () => {
    // check-values 3a (47 mmHg, R 0.8) and 3f (1.34, 0.003)
    expect(physiology.WATER_VAPOUR_PRESSURE_37C_MMHG).toBe(47);
    expect(physiology.RESPIRATORY_QUOTIENT_DEFAULT).toBe(0.8);
    expect(physiology.HUFNER_CLINICAL_ML_PER_G).toBe(1.34);
    expect(physiology.OXYGEN_SOLUBILITY_ML_PER_DL_PER_MMHG).toBe(0.003);
  });
});
