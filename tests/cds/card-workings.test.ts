import { describe, expect, it } from 'vitest';
import { prepareWorkings, renderWorkings } from '../../src/cds/card-workings.js';
import { assessment, bundledPolicy, facts, finding, NOW } from './support/card-inputs.js';

const policy = bundledPolicy();
const workings = renderWorkings({ finding, facts, assessment, policy, now: NOW });

function section(markdown: string, heading: string): string[] {
  const start = markdown.indexOf(`**${heading}**\n\n`);
  expect(start).toBeGreaterThan(-1);
  const rest = markdown.slice(start + heading.length + 6);
  const end = rest.indexOf('\n\n**');
  return (end === -1 ? rest : rest.slice(0, end)).split('\n');
}

describe('renderWorkings', () => {
  it('keeps the five sections in order, so nothing taken off the card is lost', () => {
    const headings = [...workings.matchAll(/^\*\*([^*]+)\*\*$/gm)].map((m) => m[1]);
    expect(headings).toStrictEqual(['Inputs used', 'Calculation', 'Set aside', 'Sources', 'Cautions']);
  });

  it("lists each input with its local time, how long ago, and its FHIR reference", () => {
    // NOW is 08:10 UTC on 14 March 2025: GMT in Europe/London, the bundled policy's site.timeZone.
    expect(section(workings, 'Inputs used')).toStrictEqual([
      '- Order under check: Nasal cannula, 3 L/min, target 94–98 % (read from the order text) (ServiceRequest/lb-o2-0001)',
      '- Estimated FiO2 delivered by the ordered device: 0.32 (0.28–0.36)',
      '- Age 64 years',
      '- SpO2 93 % at 07:50 (20 min ago) (Observation/lb-spo2-0001)',
      '- Respiratory rate 22/min at 07:50 (20 min ago) (Observation/lb-rr-0001)',
      '- Recorded oxygen flow 2 L/min at 07:50 (20 min ago) (Observation/lb-flow-0001)',
      '- Blood gas (arterial) at 06:40 (1 h 30 min ago): pH 7.37, PCO2 6.7 kPa, PO2 8.1 kPa, HCO3 29 mmol/L',
      '- Risk of hypercapnic respiratory failure: Chest wall deformity: Kyphoscoliosis deformity of spine (SNOMED CT 405773007) (Condition/lb-cond-0001)',
      '- Risk of hypercapnic respiratory failure: PaCO2 6.7 kPa at 06:40',
      '- Barometric pressure 756 mmHg (ICAO standard atmosphere at 40 m)',
      '- Ward: Ward 7 (respiratory)',
    ]);
  });

  it('names the unit override that set the ranges, and says nothing of units when none did', () => {
    const icu = {
      name: 'ICU',
      match: { names: ['Ward 7 (respiratory)'], patterns: [], locations: [] },
      targets: { standard: { lowPercent: 92, highPercent: 96 }, hypercapnicRisk: undefined }, // PILOT 2022 intermediate arm
      basisKey: undefined,
    };
    const onUnit = renderWorkings({
      finding,
      facts,
      assessment: { ...assessment, unit: { kind: 'matched', unit: icu, index: 0, matchedBy: "name 'Ward 7 (respiratory)'", alsoMatched: [] } },
      policy,
      now: NOW,
    });
    expect(section(onUnit, 'Inputs used').at(-1)).toBe(
      "- Unit targets: ICU (local policy, units list; matched by name 'Ward 7 (respiratory)')",
    );
    expect(workings).not.toContain('Unit targets');
  });

  it('shows each calculation with the formula and the patient numbers substituted', () => {
    expect(section(workings, 'Calculation')).toStrictEqual([
      '- **Barometric pressure at the site** (ICAO ISA)',
      '  - Formula: P = 760 × (1 − 2.25577e-5 × h)^5.25588',
      "  - With this patient's values: h = 40 m",
      '  - Result: **756 mmHg**',
      '- **Alveolar PO2 (simplified alveolar gas equation)** (Alveolar gas equation)',
      '  - Formula: PAO2 = FiO2 × (PB − PH2O) − PaCO2 / R',
      "  - With this patient's values: 0.32 × (756 − 47) − 50.3 / 0.8",
      '  - Result: **164 mmHg**',
    ]);
  });

  it('lists what was set aside, and what could not be had', () => {
    expect(section(workings, 'Set aside')).toStrictEqual([
      '- SpO2 of 38 %: implausible value. Outside the plausible range for a pulse oximeter reading. (Observation/lb-spo2-0000)',
    ]);
    const partial = renderWorkings({ finding, facts: { ...facts, missingData: ['encounter'] }, assessment, policy, now: NOW });
    expect(section(partial, 'Inputs used').at(-1)).toBe('- Not available: encounter');
  });

  it('cites each source in full, then the policy itself', () => {
    const lines = section(workings, 'Sources');
    expect(lines.map((line) => line.slice(0, line.indexOf(':')))).toStrictEqual([
      '- **BTS 2017**',
      '- **Low-flow mixing model**',
      '- **ICAO ISA**',
      '- **Alveolar gas equation**',
      '- Local policy',
    ]);
    expect(lines[0]).toMatch(/ <https:\/\/www\.brit-thoracic\.org\.uk\/>$/);
  });

  it('ends with every caution line of the policy', () => {
    expect(section(workings, 'Cautions')).toStrictEqual(policy.cautions.map((line) => `- ${line}`));
  });

  describe('edge cases', () => {
    it('says so when nothing was set aside and no calculation was needed', () => {
      const bare = renderWorkings({ finding: { ...finding, computations: [] }, facts: { ...facts, setAside: [] }, assessment, policy, now: NOW });
      expect(section(bare, 'Calculation')).toStrictEqual(['- No calculation was needed for this advice.']);
      expect(section(bare, 'Set aside')).toStrictEqual(['- Nothing was set aside.']);
    });

    it('shows a time it cannot read as the record gave it', () => {
      const odd = { ...facts.spo2Percent[0], at: 'yesterday' } as (typeof facts.spo2Percent)[number];
      const text = renderWorkings({
        finding,
        facts,
        assessment: { ...assessment, current: { ...assessment.current, spo2: odd } },
        policy,
        now: NOW,
      });
      expect(text).toContain('- SpO2 93 % at yesterday (time not readable) (Observation/lb-spo2-0001)');
    });
  });
});

describe('prepareWorkings', () => {
  it('renders each card of a call exactly as renderWorkings does, the shared sections built once', () => {
    const render = prepareWorkings(facts, policy, NOW);
    const bare = { ...finding, computations: [], sourceKeys: [] };
    expect(render(finding, assessment)).toBe(workings);
    expect(render(bare, assessment)).toBe(renderWorkings({ finding: bare, facts, assessment, policy, now: NOW }));
    const otherOrder = { ...assessment, order: undefined };
    expect(render(finding, otherOrder)).toBe(renderWorkings({ finding, facts, assessment: otherOrder, policy, now: NOW }));
  });
});
