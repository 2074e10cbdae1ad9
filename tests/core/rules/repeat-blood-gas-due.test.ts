import { describe, expect, it } from 'vitest';
import { rule } from '../../../src/core/rules/repeat-blood-gas-due.js';
import { NOW, bloodGas, buildFacts, condition, minutesAgo, o2Flow, oxygenOrder } from '../facts-builder.js';
import { expectCardRenders } from './card-check.js';
import { onlyFinding, runRule } from './run-rule.js';

const copd = [condition('copd')];
const morningGas = bloodGas({ ageMinutes: 240, ph: 7.37, paco2Kpa: 6.7, pao2Kpa: 8.2 });

describe('repeat-blood-gas-due', () => {
  it('runs on order-sign as information', () => {
    expect(rule.hooks).toStrictEqual(['order-sign']);
    expect(rule.defaultIndicator).toBe('info');
  });

  it('asks for a repeat gas in 30-60 min when an at-risk patient has oxygen changed now', () => {
    // BTS 2017, Tables 2-4: repeat blood gas 30-60 min after starting or changing oxygen
    const facts = buildFacts({ conditions: copd, bloodGases: [morningGas] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values.dueWindow).toBe('in 30–60 min');
    expect(finding.values.repeatWindow).toBe('30–60 min');
    expect(finding.values.lastGas).toBe('4 h ago');
    expect(expectCardRenders(finding).summary).toBe('Repeat blood gas due in 30–60 min after this oxygen change (hypercapnic risk)');
  });

  it('asks for a repeat gas for a compensated retainer with no history on record', () => {
    // pH 7.38 in range (RCEM), PaCO2 7.4 kPa >= 6 kPa (BTS 2017 clarification), HCO3 32 beyond the acute
    // rise (check-values 3g): chronic compensated hypercapnia, controlled oxygen and a repeat gas in
    // 30-60 min (BTS 2017 pathway as taught, quoted secondarily)
    const facts = buildFacts({ bloodGases: [bloodGas({ ageMinutes: 50, ph: 7.38, paco2Kpa: 7.4, hco3: 32 })] });
    expect(onlyFinding(runRule(rule, facts)).values.riskReasons).toContain('PaCO2 7.4 kPa');
  });

  it('leaves the repeat gas of a tiring patient without chronic retention to the critical card', () => {
    // acute asthma, pH 7.27, PaCO2 7.8 kPa, HCO3 25 within the acute rise (check-values 3g); policy `keep`
    const facts = buildFacts({
      conditions: [condition('acute-asthma')],
      bloodGases: [bloodGas({ ageMinutes: 50, ph: 7.27, paco2Kpa: 7.8, hco3: 25 })],
    });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  it.each([
    // minutes since the order; BTS 2017 window 30-60 min
    [10, 'in 20–50 min', 'info'],
    [30, 'now (the window closes in 30 min)', 'info'],
    [45, 'now (the window closes in 15 min)', 'info'],
    [60, 'now (the window ends now)', 'info'], // the window includes its end
    [61, 'overdue (the window closed 1 min ago)', 'warning'],
    [130, 'overdue (the window closed 1 h 10 min ago)', 'warning'],
  ])('%s min after the order the gas is due %s', (minutes, due, indicator) => {
    const facts = buildFacts({ conditions: copd, orders: [oxygenOrder({ authoredOn: minutesAgo(minutes) })], bloodGases: [bloodGas({ ageMinutes: minutes + 60, ph: 7.4, paco2Kpa: 6.2 })] });
    const finding = onlyFinding(runRule(rule, facts));
    expect(finding.values.dueWindow).toBe(due);
    expect(finding.indicator).toBe(indicator);
    expectCardRenders(finding);
  });

  it('does not fire when a gas has been taken since the order', () => {
    const facts = buildFacts({
      conditions: copd,
      orders: [oxygenOrder({ authoredOn: minutesAgo(90) })],
      bloodGases: [bloodGas({ ageMinutes: 30, ph: 7.38, paco2Kpa: 6.3 })],
    });
    expect(runRule(rule, facts)).toStrictEqual([]);
  });

  it('does not fire for a patient without hypercapnic risk', () => {
    expect(runRule(rule, buildFacts({ bloodGases: [bloodGas({ ageMinutes: 240, ph: 7.4, paco2Kpa: 5 })] }))).toStrictEqual([]);
  });

  describe('edge cases', () => {
    it('counts from the last flow change when it is later than the order', () => {
      const facts = buildFacts({
        conditions: copd,
        orders: [oxygenOrder({ authoredOn: minutesAgo(300) })],
        bloodGases: [bloodGas({ ageMinutes: 200, ph: 7.39, paco2Kpa: 6.1 })],
        o2FlowLPerMin: [o2Flow(3, 20), o2Flow(2, 120)],
      });
      expect(onlyFinding(runRule(rule, facts)).values.dueWindow).toBe('in 10–40 min');
    });

    it('applies after re-targeting, which BTS also follows with a repeat gas', () => {
      // BTS 2017, Tables 2-4: repeat gas when re-targeted to 94-98 %
      const facts = buildFacts({ conditions: copd, bloodGases: [bloodGas({ ageMinutes: 120, ph: 7.42, paco2Kpa: 5.1 })] });
      expect(runRule(rule, facts)).toHaveLength(1);
    });

    it('says when there is no gas on record at all, and treats an order without a time as written now', () => {
      const facts = buildFacts({ conditions: copd, orders: [oxygenOrder({ authoredOn: undefined })] });
      const finding = onlyFinding(runRule(rule, facts, { now: NOW }));
      expect(finding.values.lastGas).toBe('none on record');
      expect(finding.values.dueWindow).toBe('in 30–60 min');
    });

    it('treats an order whose time cannot be read as written now, as one without a time', () => {
      // BTS 2017 Tables 2-4: a repeat gas 30-60 min after starting or changing oxygen
      const unreadable = buildFacts({ conditions: copd, orders: [oxygenOrder({ authoredOn: 'yesterday' })] });
      expect(onlyFinding(runRule(rule, unreadable, { now: NOW })).values.dueWindow).toBe('in 30–60 min');
    });
  });
});
