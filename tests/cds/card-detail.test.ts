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
