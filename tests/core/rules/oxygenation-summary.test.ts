import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/oxygenation-summary.js';
import { BTS, activeOrder, bloodGas, buildFacts, fio2, haemoglobin, minutesAgo, oxygenOrder, respRate, spo2, withPolicy } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const seaLevel = withPolicy(BTS, { site: { ...BTS.site, barometricPressureMmHg: 760 } });

describe('oxygenation-summary', () => {
  it('runs on order-sign as information', () => {
    expect(rule.hooks).toStrictEqual(['order-sign']);
    expect(rule.defaultIndicator).toBe('info');
  });

  it('shows the sea-level air case: PAO2 100 mmHg, A-a 5 mmHg against an age norm of 19 mmHg', () => {
    // check-values 3a: FiO2 0.21, PB 760, PaCO2 40 -> PAO2 99.7; PaO2 95 -> A-a 4.7 (D); age/4 + 4 at 60 = 19 (C)
    const facts = buildFacts({
      patient: { ageYears: 60, bmiKgPerM2: 25 },
      bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.4, paco2MmHg: 40, pao2MmHg: 95, hco3: 24 })],
      fio2Fraction: [fio2(0.21, 35)],
      spo2Percent: [spo2(97, 30)],
      haemoglobinGPerDL: [haemoglobin(15)],
    });
    const finding = onlyFinding(runRule(rule, facts, { policy: seaLevel }));
    expect(finding.values.alveolarPo2).toBe('100 mmHg');
    expect(finding.values.aaGradient).toBe('5 mmHg; age norm on air 19 mmHg');
    expect(finding.values.barometricPressure).toBe('760 mmHg (site value from the local policy)');
    expect(finding.values.gasUsed).toMatch(/; taken on FiO2 0\.21 \(room air\), as recorded$/);
    expect(finding.values.pfRatio).toBe('452 mmHg at FiO2 0.21 (room air), as recorded; above 300, outside the Berlin ARDS bands');
    expect(finding.values.rox).toBe('not available (ROX applies to high-flow nasal cannula only)');
    expect(finding.computations.map((c) => c.name)).toStrictEqual([
      'Delivered FiO2 (estimate)',
      'Barometric pressure',
      'Inspired PO2',
      'Alveolar PO2 (alveolar gas equation)',
      'A-a gradient',
      'Expected A-a gradient for age (on air)',
      'P/F ratio',
      'S/F ratio',
      'Arterial oxygen content',
    ]);
    const card = expectCardRenders(finding);
    // The key numbers lead: P/F 95/0.21 = 452 and A-a 99.7 - 95 = 4.7 mmHg (check-values 3a, derived).
    // The gas was taken on air, not on the order's FiO2 0.29, and the line says so.
    expect(card.summary).toBe('Oxygenation on Nasal cannula at 2 L/min: FiO2 about 0.29, P/F 452 on air, A-a 5 mmHg');
  });

  it.each([
    // check-values 3a (D): PB 760, R 0.8, PH2O 47 -> simplified PAO2; A-a = PAO2 - PaO2
    [0.21, 40, 60, '100 mmHg', '40 mmHg'],
    [0.21, 30, 65, '112 mmHg', '47 mmHg'],
    [0.28, 50, 70, '137 mmHg', '67 mmHg'],
    [0.5, 40, 200, '307 mmHg', '107 mmHg'],
  ])('at FiO2 %s, PaCO2 %s and PaO2 %s mmHg shows PAO2 %s and A-a %s', (f, paco2, pao2, alveolar, gradient) => {
    const facts = buildFacts({
      bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.4, paco2MmHg: paco2, pao2MmHg: pao2 })],
      fio2Fraction: [fio2(f, 30)],
    });
    const finding = onlyFinding(runRule(rule, facts, { policy: seaLevel }));
    expect(finding.values.alveolarPo2).toBe(alveolar);
    expect(finding.values.aaGradient?.startsWith(gradient)).toBe(true);
    expectCardRenders(finding);
  });

  it('says the age norm does not apply on oxygen', () => {
    // check-values 3a: FiO2 0.4, PaCO2 40, PaO2 80 -> A-a 155.2 at 760 mmHg; age norms do not apply on oxygen
    const facts = buildFacts({
      bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.4, paco2MmHg: 40, pao2MmHg: 80 })],
      fio2Fraction: [fio2(0.4, 30)],
    });
    const finding = onlyFinding(runRule(rule, facts, { policy: seaLevel }));
    expect(finding.values.aaGradient).toBe('155 mmHg; the age norm applies on air only, so it is not compared');
    // Berlin 2012 (V): moderate is 100 < P/F ≤ 200, so exactly 200 is moderate
    expect(finding.values.pfRatio).toBe('200 mmHg at FiO2 0.40, as recorded; Berlin moderate band (100–200)');
  });

  it('shows ROX on high flow with the Roca reading', () => {
    // Roca 2019: ROX = (SpO2/FiO2)/RR; 92/0.5/30 = 6.13, >= 4.88 lower risk after 2 h
    const hfnc = { device: 'high-flow-nasal-cannula' as const, flowLPerMin: 50, setFio2Fraction: 0.5 };
    const facts = buildFacts({
      orders: [oxygenOrder(hfnc)],
      activeOrders: [activeOrder({ ...hfnc, authoredOn: minutesAgo(240) })],
      spo2Percent: [spo2(92)],
      fio2Fraction: [fio2(0.5)],
      respRatePerMin: [respRate(30)],
    });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values.rox).toBe('6.13 after 4 h, 4.88 or more: lower risk of high-flow failure (Roca 2019)');
    expect(finding.values.sfRatio).toBe('184 at FiO2 0.50, as recorded; at or below 235 (Rice: about P/F 200 or less)');
    expectCardRenders(finding);
  });

  it('does not fire when nothing can be shown', () => {
    const facts = buildFacts({ orders: [oxygenOrder({ device: undefined, deviceText: 'oxygen as needed' })] });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  it('shows one FiO2 for one high-flow setting: the set FiO2, whatever the breathing', () => {
    // Annual Update ICEM 2017 (V): HFNC delivers the set FiO2; Roca 2019: (86 / 0.80) / 33 = 3.26;
    // S/F 86 / 0.80 = 107.5 (Rice 2007 definition), shown as a whole number
    const hfnc = { device: 'high-flow-nasal-cannula' as const, flowLPerMin: 50, setFio2Fraction: 0.8 };
    const facts = buildFacts({
      orders: [oxygenOrder(hfnc)],
      activeOrders: [activeOrder({ ...hfnc, setFio2Fraction: 0.6, authoredOn: minutesAgo(360) })],
      spo2Percent: [spo2(86)],
      fio2Fraction: [fio2(0.8)],
      respRatePerMin: [respRate(33)],
    });
    const finding = onlyFinding(runRule(rule, facts));
    const card = expectCardRenders(finding);
    expect(card.summary).toBe('Oxygenation on High-flow nasal cannula FiO2 0.80 at 50 L/min: FiO2 0.80 set, S/F 108, ROX 3.26');
    expect(finding.values.deliveredFio2).toBe('0.80 as set; from the high-flow blender setting');
    expect(finding.computations[0]?.name).toBe('Delivered FiO2 (device setting)');
    expect(finding.computations[0]?.sourceKey).toBe('hfnc-2017');
  });

  it.each([
    // Rice 2007 cut-offs 235 and 315 (check-values 3e, V); classifySfRice puts a cut-off in the lower band
    [91, 0.289, '315 at FiO2 0.29, as recorded; at or below 315 (Rice: about P/F 300 or less)'], // 91 / 0.289 = 314.88
    [91, 0.2888, '316 at FiO2 0.29, as recorded; above 315 (Rice: about P/F above 300)'], // 91 / 0.2888 = 315.10
    [94, 0.4, '235 at FiO2 0.40, as recorded; at or below 235 (Rice: about P/F 200 or less)'], // exactly on the cut-off
  ])('shows S/F %s / %s as "%s", never rounded onto the other side of a cut-off', (sat, f, words) => {
    const facts = buildFacts({ spo2Percent: [spo2(sat)], fio2Fraction: [fio2(f)] });
    expect(onlyFinding(runRule(rule, facts)).values.sfRatio).toBe(words);
  });

  it('shows a P/F just above a Berlin band edge as a whole number on its own side', () => {
    // Berlin 2012 (V): mild 200 < P/F <= 300; 60.12 / 0.3 = 200.4 is mild, so never "200"
    const facts = buildFacts({
      bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.4, paco2MmHg: 40, pao2MmHg: 60.12 })],
      fio2Fraction: [fio2(0.3, 30)],
    });
    expect(onlyFinding(runRule(rule, facts)).values.pfRatio).toBe('201 mmHg at FiO2 0.30, as recorded; Berlin mild band (200–300)');
  });

  describe('the mechanism line and the key figures', () => {
    it('gives the mechanism hint on oxygen with the shorter caveat and no full stop of its own', () => {
      // check-values 3a (D): FiO2 0.28, PB 760, PaCO2 50 -> PAO2 137; PaO2 70 -> A-a 67 mmHg, raised
      // against the age norm widened on oxygen (age/4 + 4, C; 7 mmHg per 0.10 FiO2, from memory)
      const facts = buildFacts({
        bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.4, paco2MmHg: 50, pao2MmHg: 70 })],
        fio2Fraction: [fio2(0.28, 30)],
      });
      const mechanism = onlyFinding(runRule(rule, facts, { policy: seaLevel })).values.mechanism ?? '';
      expect(mechanism).toContain('allowed on FiO2 0.28 (a looser comparison on oxygen)');
      expect(mechanism).not.toContain('less reliable');
      expect(mechanism).not.toMatch(/\.$/);
      expect(mechanism.length).toBeGreaterThan(0);
    });

    it('shows in the key figures the same P/F, A-a and ROX texts as the detail lines', () => {
      // PaO2 64 mmHg on nasal cannula 3 L/min ≈ 0.32 ± 0.05 (rule of 4, FCCS: C / V2): P/F and A-a are ranges
      const facts = buildFacts({
        orders: [oxygenOrder({ flowLPerMin: 3 })],
        respRatePerMin: [respRate(20)],
        bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.4, paco2MmHg: 40, pao2MmHg: 64 })],
      });
      const { values } = onlyFinding(runRule(rule, facts, { policy: seaLevel }));
      const pfShown = /^(about \d+ \(\d+–\d+\)) mmHg/.exec(values.pfRatio ?? '')?.[1];
      const aaShown = /^(about \d+ \(\d+–\d+\) mmHg)/.exec(values.aaGradient ?? '')?.[1];
      expect(pfShown).toBeDefined();
      expect(aaShown).toBeDefined();
      expect(values.keyFigures).toContain(`P/F ${pfShown ?? ''}`);
      expect(values.keyFigures).toContain(`A-a ${aaShown ?? ''}`);
    });
  });

  describe('ratios on an FiO2 that is not exact', () => {
    it('shows P/F as "about" a range on an estimated FiO2 and states no Berlin band when the range spans 200', () => {
      // Nasal cannula 3 L/min ≈ 0.32 ± 0.05 (rule of 4, FCCS: C / V2); PaO2 64 mmHg → P/F about 195, its
      // range spanning the Berlin 200 cut-off (JAMA 2012, V), so "moderate" would be a guess
      const facts = buildFacts({
        orders: [oxygenOrder({ flowLPerMin: 3 })],
        respRatePerMin: [respRate(20)],
        bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.4, paco2MmHg: 40, pao2MmHg: 64 })],
      });
      const finding = onlyFinding(runRule(rule, facts, { policy: seaLevel }));
      const pf = finding.values.pfRatio ?? '';
      expect(pf).toMatch(/^about \d+ \(\d+–\d+\) mmHg at an estimated FiO2 of about 0\.\d\d \(0\.\d\d–0\.\d\d\)/);
      expect(pf).toContain('around 200: the range spans the Berlin 200 cut-off, so no band is stated');
      expect(pf).not.toMatch(/moderate|mild/);
      expect(finding.values.aaGradient).toMatch(/^about \d+ \(\d+–\d+\) mmHg over the FiO2 range/);
      const card = expectCardRenders(finding);
      expect(card.summary).toMatch(/P\/F about \d+ \(\d+–\d+\)/);
    });

    it('states the Berlin band when even the ends of the FiO2 range agree', () => {
      // PaO2 75 mmHg at 0.28-0.37: P/F about 228 (203-272), mild throughout (Berlin 2012, V)
      const facts = buildFacts({
        orders: [oxygenOrder({ flowLPerMin: 3 })],
        respRatePerMin: [respRate(20)],
        bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.4, paco2MmHg: 40, pao2MmHg: 75 })],
      });
      expect(onlyFinding(runRule(rule, facts, { policy: seaLevel })).values.pfRatio).toMatch(/; Berlin mild band \(200–300\)$/);
    });

    it('names the Venturi setting and its measured accuracy as the FiO2 of P/F', () => {
      // Jones 1984 (V): the 40 % setting within 1.9 %; PaO2 80 / 0.40 = 200, range 191-210 spans the
      // Berlin 200 cut-off, so no band; minimum 10 L/min for 40 % (common practice)
      const venturi = { device: 'venturi-mask' as const, flowLPerMin: 10, setFio2Fraction: 0.4 };
      const facts = buildFacts({
        orders: [oxygenOrder(venturi)],
        respRatePerMin: [respRate(18)],
        bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.4, paco2MmHg: 40, pao2MmHg: 80 })],
      });
      const finding = onlyFinding(runRule(rule, facts, { policy: seaLevel }));
      expect(finding.values.pfRatio).toBe(
        "about 200 (191–210) mmHg at the set FiO2 0.40 (0.38–0.42 by the device's measured accuracy); around 200: the range spans the Berlin 200 cut-off, so no band is stated",
      );
      expect(finding.computations[0]?.sourceKey).toBe('air-entrainment');
      expectCardRenders(finding);
    });
  });

  describe('edge cases', () => {
    it('fires on the delivered-FiO2 estimate alone and says what is missing', () => {
      const finding = onlyFinding(runRule(rule, buildFacts()));
      // policy freshness.bloodGasMinutes 720 (local policy): no gas within 12 h, and no FiO2 named for a missing gas
      expect(finding.values.gasUsed).toBe('none within the last 12 h');
      expect(finding.values.gasUsed).not.toContain('FiO2');
      expect(finding.values.alveolarPo2).toBe('not available (no current arterial gas)');
      expectCardRenders(finding);
    });

    it('reads a venous gas for acid-base only', () => {
      const facts = buildFacts({ bloodGases: [bloodGas({ ageMinutes: 20, specimen: 'venous', ph: 7.33, paco2Kpa: 6.9 })] });
      const finding = onlyFinding(runRule(rule, facts));
      expect(finding.values.gasUsed).toBe('venous 20 min ago, pH 7.33, PCO2 6.9 kPa');
      expect(finding.values.alveolarPo2).toBe('not available (no current arterial gas)');
      expect(finding.values.gasInterpretation).not.toMatch(/^not available/);
    });
  });
});
