import { describe, expect, it } from 'vitest';
import { offeredOverrideReasons, policyCardValues } from '../../src/cds/policy-card-text.js';
import type { Policy, PolicyOverrideReasons } from '../../src/core/policy.js';
import { bundledPolicy } from './support/card-inputs.js';

/** The reasons and citations a card takes from the policy (docs/policy.md, "override reasons"). */

const base = bundledPolicy();
const withReasons = (overrideReasons: PolicyOverrideReasons): Policy => ({ ...base, overrideReasons });
const cardFile = {
  overrideReasons: [
    { code: 'patient-specific-target', display: 'Individual target agreed by the team' },
    { code: 'specialist-advice', display: 'Range set on specialist advice' },
  ],
};
const consultant = { code: 'discussed-with-consultant', display: 'Discussed with the consultant on call' };
const outreach = { code: 'outreach-agreed-target', display: 'Target agreed with the outreach team' };

describe('offeredOverrideReasons', () => {
  it('offers the card file reasons alone when the policy gives none (the default: as before)', () => {
    expect(offeredOverrideReasons(base, 'target-differs-from-policy', cardFile)).toStrictEqual(cardFile.overrideReasons);
  });

  it('adds allCards then byRule after the card file reasons, for that rule only', () => {
    const policy = withReasons({ merge: 'add', allCards: [consultant], byRule: { 'target-differs-from-policy': [outreach] } });
    expect(offeredOverrideReasons(policy, 'target-differs-from-policy', cardFile).map((r) => r.code)).toStrictEqual([
      'patient-specific-target',
      'specialist-advice',
      'discussed-with-consultant',
      'outreach-agreed-target',
    ]);
    expect(offeredOverrideReasons(policy, 'spo2-above-target', cardFile).map((r) => r.code)).toStrictEqual([
      'patient-specific-target',
      'specialist-advice',
      'discussed-with-consultant',
    ]);
  });

  it('keeps one reason a code: a code given again keeps its place and takes the later display', () => {
    const reworded = { code: 'specialist-advice', display: 'Range set by the respiratory consultant' };
    const policy = withReasons({ merge: 'add', allCards: [], byRule: { 'target-differs-from-policy': [reworded] } });
    expect(offeredOverrideReasons(policy, 'target-differs-from-policy', cardFile)).toStrictEqual([
      cardFile.overrideReasons[0],
      reworded,
    ]);
  });

  it('replaces the card file reasons where the policy gives any, and keeps them where it gives none', () => {
    const policy = withReasons({ merge: 'replace', allCards: [], byRule: { 'target-differs-from-policy': [outreach] } });
    expect(offeredOverrideReasons(policy, 'target-differs-from-policy', cardFile)).toStrictEqual([outreach]);
    expect(offeredOverrideReasons(policy, 'spo2-above-target', cardFile)).toStrictEqual(cardFile.overrideReasons);
    const everywhere = withReasons({ merge: 'replace', allCards: [consultant], byRule: {} });
    expect(offeredOverrideReasons(everywhere, 'spo2-above-target', cardFile)).toStrictEqual([consultant]);
  });
});

describe('policyCardValues', () => {
  it('cites the primary guideline for a rule the policy names none for, and the named one otherwise', () => {
    const policy: Policy = {
      ...base,
      basisKey: 'tsanz-2015',
      clinicalBasis: { guidelineKeys: ['tsanz-2015', 'bts-2017'], ruleCitations: { 'pneumothorax-oxygen': 'bts-2017' }, topicCitations: {} },
    };
    expect(policyCardValues(policy, 'target-range-missing')['guideline']).toBe('TSANZ 2015');
    expect(policyCardValues(policy, 'pneumothorax-oxygen')['guideline']).toBe('BTS 2017');
    expect(policyCardValues(policy, 'pneumothorax-oxygen')['guidelines']).toBe('TSANZ 2015, BTS 2017');
    // No ventilation citation: the primary's label, not a guideline the policy does not name.
    expect(policyCardValues(policy, 'acute-hypercapnic-acidosis')['ventilationGuideline']).toBe('TSANZ 2015');
  });
});
