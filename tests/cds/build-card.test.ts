import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import {
  buildCard,
  buildCardReport,
  CallPlans,
  OVERRIDE_REASON_SYSTEM,
  SHORT_HASH_LENGTH,
  truncateSummary,
  type CardBuildContext,
} from '../../src/cds/build-card.js';
import { cardUuid, suggestionUuid } from '../../src/cds/stable-uuid.js';
import { planOrderChange } from '../../src/fhir/apply-change.js';
import { expectConformant } from '../helpers/card-conformance.js';
import { fhirSchemaErrors } from '../helpers/fhir-schema.js';
import {
  assessment,
  bundledPolicy,
  draftServiceRequest,
  facts,
  finding,
  HOOK_INSTANCE,
  NOW,
  template,
} from './support/card-inputs.js';

const policy = bundledPolicy();
// FIPS 180-4 SHA-256 of the exact bytes of the bundled policy file, as node:crypto computes it.
const POLICY_HASH = createHash('sha256')
  .update(readFileSync(new URL('../../policies/based-on-bts-2017.yaml', import.meta.url)))
  .digest('hex');
const ctx: CardBuildContext = {
  template,
  policy,
  policyContentHash: POLICY_HASH,
  hookInstance: HOOK_INSTANCE,
  draftResource: draftServiceRequest,
  facts,
  assessment,
  now: NOW,
};
const TARGET_EXTENSION = 'https://oxygen-order-checker.example.org/fhir/StructureDefinition/target-oxygen-saturation';

/** The lines of the detail's "Based on" list, without the bullet. */
function basedOn(detail: string): string[] {
  const start = detail.indexOf('**Based on:**\n');
  if (start === -1) {
    return [];
  }
  const rest = detail.slice(start + '**Based on:**\n'.length);
  return rest.slice(0, rest.indexOf('\n\n')).split('\n').map((line) => line.replace(/^- /, ''));
}

describe('buildCard', () => {
  const card = buildCard(finding, ctx);

  it('renders the summary, indicator, source and override reasons', () => {
    expect(card.summary).toBe('Target 94–98 % ordered, but this patient is at risk of hypercapnia: 88–92 % advised');
    expect(card.indicator).toBe('critical');
    expect(card.source).toStrictEqual({
      label: `Adult acute oxygen targets based on BTS 2017 (based-on-bts-2017 v1.0.0 #${POLICY_HASH.slice(0, 12)}) · BTS 2017`,
      url: 'https://www.brit-thoracic.org.uk/',
      topic: { system: 'https://oxygen-order-checker.example.org/fhir/CodeSystem/rule', code: 'target-above-hypercapnic-range' },
    });
    expect(card.overrideReasons).toStrictEqual([
      { code: 'patient-specific-target', system: OVERRIDE_REASON_SYSTEM, display: 'Patient has an individual target agreed by the team' },
      { code: 'senior-decision', system: OVERRIDE_REASON_SYSTEM, display: 'A senior clinician has set this target' },
    ]);
  });

  it('starts the detail with the template, values escaped for Markdown', () => {
    expect(card.detail?.split('\n\n')[0]).toBe(
      'Risk: kyphoscoliosis\\_(chest wall deformity). Delivered FiO2 about 0.32 (0.28–0.36). Repeat the gas in 30 min to 1 h.',
    );
  });

  it('keeps the detail compact: the rule text, then Based on, Sources and the cautions, nothing else', () => {
    const blocks = (card.detail ?? '').split('\n\n');
    expect(blocks.map((block) => /^\*\*([^*]+):\*\*/.exec(block)?.[1] ?? (block.startsWith('_') ? 'cautions' : 'text'))).toStrictEqual([
      'text',
      'Based on',
      'Sources',
      'cautions',
    ]);
    // The full workings are not on the card (they are rendered by renderWorkings).
    expect(card.detail).not.toMatch(/Inputs used|Set aside|Formula:/);
  });

  it("lists only the template's inputs, each in the site's local time with how long ago, then one line per computation", () => {
    const withInputs = buildCard(finding, { ...ctx, template: { ...template, basedOn: ['spo2', 'blood-gas'] } });
    // NOW is 08:10 UTC on 14 March 2025, GMT in Europe/London (policies/based-on-bts-2017.yaml site.timeZone).
    expect(basedOn(withInputs.detail ?? '')).toStrictEqual([
      'SpO2 93 % at 07:50 (20 min ago)',
      'Blood gas (arterial) at 06:40 (1 h 30 min ago): pH 7.37, PCO2 6.7 kPa, PO2 8.1 kPa, HCO3 29 mmol/L',
      'Barometric pressure at the site: h = 40 m → **756 mmHg**',
      'Alveolar PO2 (simplified alveolar gas equation): 0.32 × (756 − 47) − 50.3 / 0.8 → **164 mmHg**',
    ]);
    // No raw ISO time and no FHIR reference on the card: those are in the workings.
    expect(withInputs.detail).not.toMatch(/\d{4}-\d\d-\d\dT|Observation\//);
  });

  it('puts the short content hash it is given on the source label, and nothing where it has none', () => {
    expect(SHORT_HASH_LENGTH).toBe(12);
    const other = createHash('sha256').update('another policy file').digest('hex');
    expect(buildCard(finding, { ...ctx, policyContentHash: other }).source.label).toContain(`v1.0.0 #${other.slice(0, 12)})`);
    const { policyContentHash: _hash, ...unhashed } = ctx;
    expect(buildCard(finding, unhashed).source.label).toContain('(based-on-bts-2017 v1.0.0) · ');
  });

  it('names each source by its label, and the policy by id and version', () => {
    expect(card.detail).toContain(
      '**Sources:** BTS 2017 · Low-flow mixing model · ICAO ISA · Alveolar gas equation · local policy based-on-bts-2017 v1.0.0',
    );
  });

  it('ends with every caution of the policy: advisory only and pulse oximetry limits', () => {
    const last = (card.detail ?? '').split('\n\n').at(-1) ?? '';
    expect(last).toMatch(/^_Advisory only: this check supports, and does not replace, the clinical judgement/);
    // ISO 80601-2-61 (Arms <= 4 %) and Sjoding 2020 (skin pigmentation), as the bundled policy words them
    expect(last).toContain('within about 4 % of arterial saturation (ISO 80601-2-61)');
    expect(last).toContain('darker skin (Sjoding 2020)');
  });

  it('offers one recommended update of the whole draft with the new target', () => {
    expect(card.selectionBehavior).toBe('at-most-one');
    expect(card.suggestions).toHaveLength(1);
    const suggestion = card.suggestions?.[0];
    expect(suggestion?.label).toBe('Change target to 88–92 %');
    expect(suggestion?.uuid).toBe(suggestionUuid(card.uuid ?? '', 0));
    expect(suggestion?.isRecommended).toBe(true);
    const action = suggestion?.actions?.[0];
    expect(action?.type).toBe('update');
    expect(action?.description).toBe('Set the target SpO2 range to 88–92 % on the draft order.');
    const resource = action?.resource as Record<string, unknown>;
    // CDS Hooks 2.0 §Action: update carries the whole resource, same type and id
    expect(resource['resourceType']).toBe('ServiceRequest');
    expect(resource['id']).toBe('lb-o2-0001');
    for (const key of ['status', 'intent', 'code', 'subject', 'authoredOn']) {
      expect(resource[key]).toStrictEqual(draftServiceRequest[key]);
    }
    expect(resource['extension']).toContainEqual(
      expect.objectContaining({
        url: TARGET_EXTENSION,
        valueRange: expect.objectContaining({
          low: expect.objectContaining({ value: 88 }),
          high: expect.objectContaining({ value: 92 }),
        }),
      }),
    );
    expect(JSON.stringify(resource)).not.toMatch(/94\s*[-–]\s*98/);
    expect(fhirSchemaErrors(resource)).toStrictEqual([]);
  });

  it('leaves the draft resource as it was', () => {
    expect(draftServiceRequest['patientInstruction']).toBe('Oxygen 3 L/min via nasal cannula, target SpO2 94-98%');
    expect(draftServiceRequest['extension']).toBeUndefined();
  });

  it('gives a stable uuid from hook instance, rule and order', () => {
    expect(card.uuid).toBe(cardUuid(HOOK_INSTANCE, 'target-above-hypercapnic-range', 'ServiceRequest/lb-o2-0001'));
    expect(buildCard(finding, ctx)).toStrictEqual(card);
    expect(buildCard(finding, { ...ctx, hookInstance: '0c6b1e2a-3d4f-4a5b-8c6d-7e8f9a0b1c2d' }).uuid).not.toBe(card.uuid);
    expect(buildCard(finding, { ...ctx, occurrence: 1 }).uuid).not.toBe(card.uuid);
  });

  it('passes the response checklist and the R4 schema', () => {
    expectConformant({ cards: [card] });
  });

  describe('edge cases', () => {
    it('omits suggestions and selectionBehavior when the finding has no change', () => {
      const plain = buildCard({ ...finding, change: undefined }, ctx);
      expect(Object.keys(plain)).toStrictEqual(['uuid', 'summary', 'detail', 'indicator', 'source', 'overrideReasons']);
      expectConformant({ cards: [plain] });
    });

    it('omits the suggestion, and says why, when the order is not in the draft bundle', () => {
      const report = buildCardReport(finding, { ...ctx, draftResource: undefined });
      expect(report.card.suggestions).toBeUndefined();
      expect(report.problems).toStrictEqual([
        'target-above-hypercapnic-range: change offered but its order is not in draftOrders; suggestion left out',
      ]);
      expectConformant({ cards: [report.card] });
    });

    it('reports placeholders without values and source keys the policy lacks', () => {
      const { advisedRange: _a, ...values } = finding.values;
      const report = buildCardReport({ ...finding, values, sourceKeys: ['bts-2017', 'no-such-key'] }, ctx);
      expect(report.problems).toStrictEqual([
        "target-above-hypercapnic-range: summary placeholder 'advisedRange' has no value",
        "target-above-hypercapnic-range: source key 'no-such-key' is not in the policy references",
        "target-above-hypercapnic-range: suggestionLabel placeholder 'advisedRange' has no value",
      ]);
      expect(report.card.summary).toBe('Target 94–98 % ordered, but this patient is at risk of hypercapnia: (not available) advised');
      expectConformant({ cards: [report.card] });
    });

    it('leaves out the Based on list when the template names no inputs and nothing was computed', () => {
      const bare = buildCard({ ...finding, computations: [] }, ctx);
      expect(basedOn(bare.detail ?? '')).toStrictEqual([]);
      expect(bare.detail).toContain('**Sources:**');
      expectConformant({ cards: [bare] });
    });

    it('says an input the template names is missing rather than leaving it out', () => {
      const noSpo2 = buildCard(finding, {
        ...ctx,
        template: { ...template, basedOn: ['spo2'] },
        assessment: { ...assessment, current: { ...assessment.current, spo2: undefined } },
      });
      expect(basedOn(noSpo2.detail ?? '')[0]).toBe('SpO2: no current reading');
    });

    it('shortens a long rendered summary at a word boundary with an ellipsis', () => {
      const long = buildCard(finding, {
        ...ctx,
        template: { ...template, summary: `${'Oxygen target review needed '.repeat(6)}{{advisedRange}}` },
      });
      // CDS Hooks 2.0 #card-attributes: summary fewer than 140 characters
      expect(long.summary.length).toBeLessThan(140);
      expect(long.summary).toBe(`${'Oxygen target review needed '.repeat(4)}Oxygen target review…`);
      expectConformant({ cards: [long] });
    });
  });
});

describe('buildCard: a suggestion that changes only what it says', () => {
  const withInstruction = (patientInstruction: string): Record<string, unknown> => ({
    ...draftServiceRequest,
    patientInstruction,
  });

  it('withholds a new target from a conditional target, and gives the reason in the detail', () => {
    // An invented conditional order; BTS 2017 Table 4 gives 88-92 % for the at-risk patient
    const draft = withInstruction('Oxygen 3 L/min via nasal cannula, SpO2 94–98 % until the gas is back');
    const report = buildCardReport(finding, { ...ctx, draftResource: draft as typeof draftServiceRequest });
    expect(report.card.suggestions).toBeUndefined();
    expect(report.card.detail).toContain('No one-click change is offered: the order');
    expect(report.card.detail).toContain('two ranges or a condition');
    expect(report.problems).toStrictEqual([]);
    expectConformant({ cards: [report.card] });
  });

  it('withholds a target from an order that says it has none, and gives the reason', () => {
    const draft = withInstruction('Oxygen 2 L/min via nasal cannula for comfort, no SpO2 target'); // BTS 2017, from memory
    const report = buildCardReport(finding, { ...ctx, draftResource: draft as typeof draftServiceRequest });
    expect(report.card.suggestions).toBeUndefined();
    expect(report.card.detail).toContain('no SpO2 target or is for comfort');
  });

  it('says in the label what the words also state and were left as written', () => {
    const draft = withInstruction('Oxygen 3 L/min via nasal cannula, target SpO2 94-98%. If SpO2 below 85 % call doctor');
    const card = buildCard(finding, { ...ctx, draftResource: draft as typeof draftServiceRequest });
    expect(card.suggestions?.[0]?.label).toBe(
      'Change target to 88–92 % (the order text also gives "below 85 %": left as written and marked for review)',
    );
    const resource = card.suggestions?.[0]?.actions?.[0]?.resource as Record<string, unknown>;
    expect(resource['patientInstruction']).toBe(
      'Oxygen 3 L/min via nasal cannula, target SpO2 88-92%. If SpO2 below 85 % call doctor [Advisory change: target now 88-92%. Also written here and not changed: below 85 %. Check them before signing.]',
    );
    expectConformant({ cards: [card] });
  });

  it('carries an earlier change only when its words could take it', () => {
    const draft = withInstruction('Oxygen 3 L/min via nasal cannula, SpO2 94–98 % until the gas is back');
    // BTS 2017 Table 4: nasal cannulae at 1-2 L/min for the at-risk patient
    const flowFinding = { ...finding, ruleId: 'target-above-hypercapnic-range', change: { kind: 'set-flow', flowLPerMin: 2 } as const };
    const card = buildCard(flowFinding, {
      ...ctx,
      draftResource: draft as typeof draftServiceRequest,
      earlierChanges: [{ kind: 'set-target', range: { lowPercent: 88, highPercent: 92 } }], // BTS 2017 Table 4
    });
    const label = card.suggestions?.[0]?.label ?? '';
    expect(label).not.toContain('keeps:');
    const resource = card.suggestions?.[0]?.actions?.[0]?.resource as Record<string, unknown>;
    expect(resource['patientInstruction']).toBe('Oxygen 2 L/min via nasal cannula, SpO2 94–98 % until the gas is back');
  });
});

describe('CallPlans', () => {
  // BTS 2017 Table 4: 88-92 % for the patient at risk of hypercapnia, nasal cannulae at 1-2 L/min.
  const setTarget = { kind: 'set-target', range: { lowPercent: 88, highPercent: 92 } } as const;
  const setFlow = { kind: 'set-flow', flowLPerMin: 2 } as const;
  const flowFinding = { ...finding, ruleId: 'target-above-hypercapnic-range', change: setFlow };

  it('plans each change on each resource once, the plan a plan made alone would be', () => {
    const plans = new CallPlans();
    const first = plans.plan(draftServiceRequest, setTarget);
    expect(plans.plan(draftServiceRequest, setTarget)).toBe(first);
    expect(first).toStrictEqual(planOrderChange(draftServiceRequest, setTarget));
    expect(first.kind).toBe('changed');
    if (first.kind !== 'changed') return;
    const second = plans.plan(first.resource, setFlow);
    expect(plans.plan(first.resource, setFlow)).toBe(second);
    expect(second).toStrictEqual(planOrderChange(first.resource, setFlow));
  });

  it('gives the cards of a call the cards each makes with plans of its own', () => {
    const plans = new CallPlans();
    const earlierChanges = [setTarget];
    const shared = [buildCard(finding, { ...ctx, plans }), buildCard(flowFinding, { ...ctx, plans, earlierChanges })];
    const alone = [buildCard(finding, ctx), buildCard(flowFinding, { ...ctx, earlierChanges })];
    expect(shared).toStrictEqual(alone);
    // The later card carries the earlier change: the order's words state both.
    expect(shared[1]?.suggestions?.[0]?.label).toContain('keeps: set the target SpO2 range to 88–92 %');
    const resource = shared[1]?.suggestions?.[0]?.actions?.[0]?.resource as Record<string, unknown>;
    expect(resource['patientInstruction']).toBe('Oxygen 2 L/min via nasal cannula, target SpO2 88-92%');
  });
});

describe('truncateSummary', () => {
  it.each([
    ['x'.repeat(139), 'x'.repeat(139)],
    [`${'word '.repeat(30)}end`, `${'word '.repeat(27).trim()}…`],
    ['y'.repeat(200), `${'y'.repeat(138)}…`],
  ])('keeps a summary under 140 characters (%#)', (input, expected) => {
    const result = truncateSummary(input);
    expect(result).toBe(expected);
    expect(result.length).toBeLessThanOrEqual(139);
  });
});
