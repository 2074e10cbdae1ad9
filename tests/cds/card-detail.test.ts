import { describe, expect, it } from 'vitest';
import { cautionsParagraph, compactDetail, prepareCompactDetail, sourcesLine } from '../../src/cds/card-detail.js';
import { BASED_ON_KINDS } from '../../src/cds/card-templates.js';
import { cardClock } from '../../src/cds/card-time.js';
import { assessment, bundledPolicy, facts, finding, NOW } from './support/card-inputs.js';

const policy = bundledPolicy();

describe('prepareCompactDetail', () => {
  it('renders each card of a call as compactDetail does, whichever inputs each card lists', () => {
    const render = prepareCompactDetail(facts, policy, cardClock(NOW, policy.site.timeZone));
    const lists = [[...BASED_ON_KINDS], ['spo2', 'blood-gas'], ['blood-gas', 'spo2', 'spo2'], [], ['order']] as const;
    for (const basedOn of lists) {
      const input = { ruleText: 'Rule text with **bold**.', basedOn, finding, assessment };
      const expected = compactDetail({ ...input, facts, policy, now: NOW });
      // Twice: the second card of the same assessment reads the inputs built for the first.
      expect(render(input)).toBe(expected);
      expect(render(input)).toBe(expected);
    }
  });

  it('lists each input a template names once, in the order first named, and nothing for an input with no reading', () => {
    // No recorded FiO2 or flow: that input has no line to show.
    const withoutRecordedOxygen = { ...facts, o2FlowLPerMin: [] };
    const render = prepareCompactDetail(withoutRecordedOxygen, policy, cardClock(NOW, policy.site.timeZone));
    const detail = render({ ruleText: 'x', basedOn: ['spo2', 'recorded-oxygen', 'blood-gas', 'spo2'], finding, assessment });
    const list = detail.slice(detail.indexOf('**Based on:**\n') + '**Based on:**\n'.length).split('\n\n')[0]?.split('\n');
    // Invented demo readings; NOW is 08:10 UTC on 14 March 2025, GMT in Europe/London (the UK keeps GMT
    // until the last Sunday of March: common practice).
    expect(list?.slice(0, 2)).toStrictEqual([
      '- SpO2 93 % at 07:50 (20 min ago)',
      '- Blood gas (arterial) at 06:40 (1 h 30 min ago): pH 7.37, PCO2 6.7 kPa, PO2 8.1 kPa, HCO3 29 mmol/L',
    ]);
    expect(list?.filter((line) => line.startsWith('- SpO2'))).toHaveLength(1);
    expect(detail).not.toMatch(/Recorded (?:FiO2|oxygen flow)/);
  });

  it('keeps the cautions on every card: advisory only, pulse oximetry limits (docs/safety.md)', () => {
    const render = prepareCompactDetail(facts, policy, cardClock(NOW, policy.site.timeZone));
    const detail = render({ ruleText: 'x', basedOn: ['spo2'], finding, assessment });
    expect(detail.endsWith(cautionsParagraph(policy))).toBe(true);
    expect(policy.cautions.length).toBeGreaterThan(0);
  });

  describe('edge cases', () => {
    it('takes the sources and cautions from the policy object given, not from another one built earlier', () => {
      const relabelled = {
        ...policy,
        id: 'relabelled',
        cautions: ['Advisory only: a local caution line.'],
        references: Object.fromEntries(
          Object.entries(policy.references).map(([key, reference]) => [key, { ...reference, label: `Local ${reference.label}` }]),
        ),
      };
      expect(sourcesLine(finding, relabelled)).not.toBe(sourcesLine(finding, policy));
      expect(sourcesLine(finding, relabelled)).toContain('local policy relabelled');
      expect(cautionsParagraph(relabelled)).toBe('_Advisory only: a local caution line._');
    });
  });
});
