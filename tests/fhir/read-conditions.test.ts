import { describe, expect, it } from 'vitest';
import { readConditions } from '../../src/fhir/read-conditions.js';
import { ICD10, ICD10CM, SNOMED, condition } from './helpers/larkspur-bay.js';

function kindsOf(code: Record<string, unknown>, extra: Record<string, unknown> = {}): string[] {
  return readConditions([condition('c1', code, extra)]).conditions.map((c) => c.kind);
}

describe('readConditions', () => {
  // SNOMED CT codes: check-values §6 (V). Kinds: BTS 2017 Table 4 risk factors.
  it.each([
    ['13645005', 'copd'],
    ['12295008', 'bronchiectasis'],
    ['190905008', 'cystic-fibrosis'],
    ['405773007', 'chest-wall-deformity'],
    ['203638000', 'chest-wall-deformity'],
    ['298382003', 'chest-wall-deformity'],
    ['37340000', 'neuromuscular-disease'],
    ['257277002', 'neuromuscular-disease'],
    ['256321009', 'neuromuscular-disease'],
    ['190966007', 'obesity-hypoventilation'],
  ])('maps SNOMED CT %s to %s', (code, kind) => {
    const read = readConditions([condition('c1', { coding: [{ system: SNOMED, code }] })]);
    expect(read.conditions).toStrictEqual([
      { kind, matchedBy: `SNOMED CT ${code}`, display: code, reference: 'Condition/c1' },
    ]);
  });

  it.each([
    [ICD10, 'J44.1', 'copd'], // ICD-10 J44 (brief)
    [ICD10, 'J441', 'copd'], // the same code sent without its dot
    [ICD10, 'J43.9', 'copd'], // emphysema; from memory
    [ICD10, 'J47', 'bronchiectasis'],
    [ICD10, 'E84.0', 'cystic-fibrosis'],
    [ICD10, 'G12.2', 'neuromuscular-disease'],
    [ICD10CM, 'G12.21', 'neuromuscular-disease'],
    [ICD10, 'G70.0', 'neuromuscular-disease'], // myasthenia gravis; from memory
    [ICD10, 'M41.1', 'chest-wall-deformity'], // scoliosis; from memory
    [ICD10CM, 'E66.2', 'obesity-hypoventilation'],
    [ICD10CM, 'E66.01', 'morbid-obesity'],
    [ICD10CM, 'J96.12', 'chronic-hypercapnic-respiratory-failure'], // check-values §6 (V)
    [ICD10CM, 'J96.22', 'chronic-hypercapnic-respiratory-failure'], // check-values §6 (V)
    [ICD10, 'T58', 'carbon-monoxide-poisoning'],
    [ICD10, 'G44.0', 'cluster-headache'],
    [ICD10, 'J93.1', 'pneumothorax'],
    [ICD10, 'D57.0', 'sickle-cell-crisis'],
    [ICD10, 'O99.5', 'pregnancy'],
  ])('maps %s %s to %s', (system, code, kind) => {
    const read = readConditions([condition('c1', { coding: [{ system, code, display: 'x' }] })]);
    expect(read.conditions.map((c) => [c.kind, c.matchedBy])).toStrictEqual([[kind, `ICD-10 ${code}`]]);
  });

  it.each([
    ['COPD', 'copd'],
    ['Chronic obstructive pulmonary disease', 'copd'],
    ['Infective exacerbation of bronchiectasis', 'bronchiectasis'],
    ['Cystic fibrosis', 'cystic-fibrosis'],
    ['Kyphoscoliosis', 'chest-wall-deformity'],
    ['Severe scoliosis', 'chest-wall-deformity'],
    ['Chest wall deformity after thoracoplasty', 'chest-wall-deformity'],
    ['Motor neurone disease', 'neuromuscular-disease'],
    ['Duchenne muscular dystrophy', 'neuromuscular-disease'],
    ['Myasthenia gravis', 'neuromuscular-disease'],
    ['Obesity hypoventilation syndrome', 'obesity-hypoventilation'],
    ['Morbid obesity', 'morbid-obesity'],
    ['Type 2 respiratory failure', 'chronic-hypercapnic-respiratory-failure'],
    ['Home NIV user', 'previous-niv-or-imv'],
    ['Previous intubation for hypercapnia', 'previous-niv-or-imv'],
    ['Carbon monoxide poisoning', 'carbon-monoxide-poisoning'],
    ['Paraquat ingestion', 'paraquat-poisoning'],
    ['Bleomycin lung toxicity', 'bleomycin-lung-injury'],
    ['Cluster headache', 'cluster-headache'],
    ['Left pneumothorax', 'pneumothorax'],
    ['Sickle cell crisis', 'sickle-cell-crisis'],
    ['Pregnancy, 28 weeks', 'pregnancy'],
  ])('recognises the words "%s" as %s', (text, kind) => {
    const read = readConditions([condition('c1', { text })]);
    expect(read.conditions).toStrictEqual([{ kind, matchedBy: `text: '${text}'`, display: text, reference: 'Condition/c1' }]);
  });

  it('reads a coding display as well as code.text', () => {
    expect(kindsOf({ coding: [{ system: 'urn:larkspur-bay:local-problems', code: 'RESP-17', display: 'COPD' }] })).toStrictEqual(['copd']);
  });

  it('names every kind one condition carries', () => {
    expect(kindsOf({ text: 'COPD with type 2 respiratory failure on home NIV' })).toStrictEqual([
      'copd',
      'chronic-hypercapnic-respiratory-failure',
      'previous-niv-or-imv',
    ]);
  });

  it('prefers the code to the words when both name the same kind', () => {
    const read = readConditions([condition('c1', { coding: [{ system: SNOMED, code: '13645005', display: 'COPD' }], text: 'COPD' })]);
    expect(read.conditions.map((c) => c.matchedBy)).toStrictEqual(['SNOMED CT 13645005']);
  });

  describe('edge cases', () => {
    it.each(['resolved', 'inactive', 'remission'])('skips a condition whose clinicalStatus is %s', (code) => {
      const status = { clinicalStatus: { coding: [{ code }] } };
      expect(kindsOf({ text: 'Pneumothorax' }, status)).toStrictEqual([]);
    });

    it.each([
      ['resolved', 'Previous NIV for hypercapnic respiratory failure', ['chronic-hypercapnic-respiratory-failure', 'previous-niv-or-imv']],
      ['inactive', 'Acute hypercapnic respiratory failure treated with non-invasive ventilation', ['chronic-hypercapnic-respiratory-failure', 'previous-niv-or-imv']],
      ['remission', 'Type 2 respiratory failure', ['chronic-hypercapnic-respiratory-failure']],
    ])('counts a past episode of NIV or hypercapnic failure whose clinicalStatus is %s: "%s"', (code, text, kinds) => {
      // BTS 2017, Tables 2-4: previous NIV/IMV or hypercapnic failure keeps 88-92 % after a normal gas;
      // an episode that is over is recorded as resolved, and it still happened
      const read = readConditions([condition('c1', { text }, { clinicalStatus: { coding: [{ code }] } })]);
      expect(read.conditions.map((c) => c.kind)).toStrictEqual(kinds);
      expect(read.conditions.every((c) => c.matchedBy.endsWith(', a past episode'))).toBe(true);
    });

    it('counts an abated episode of NIV but not the abated COPD recorded with it', () => {
      const read = readConditions([
        { resourceType: 'Condition', id: 'a', code: { text: 'Required NIV in 2024' }, abatementDateTime: '2024-03-01' },
        { resourceType: 'Condition', id: 'b', code: { text: 'COPD' }, abatementDateTime: '2024-03-01' },
      ]);
      expect(read.conditions.map((c) => [c.kind, c.matchedBy])).toStrictEqual([
        ['previous-niv-or-imv', "text: 'Required NIV in 2024', a past episode"],
      ]);
    });

    it('does not count a refuted episode of NIV', () => {
      const status = { clinicalStatus: { coding: [{ code: 'resolved' }] }, verificationStatus: { coding: [{ code: 'refuted' }] } };
      expect(kindsOf({ text: 'Previous NIV' }, status)).toStrictEqual([]);
    });

    it('does not read "not requiring NIV" as previous NIV', () => {
      expect(kindsOf({ text: 'COPD exacerbation not requiring NIV' })).toStrictEqual(['copd']);
    });

    it.each(['recurrence', 'relapse', 'active'])('counts a condition whose clinicalStatus is %s', (code) => {
      expect(kindsOf({ text: 'Pneumothorax' }, { clinicalStatus: { coding: [{ code }] } })).toStrictEqual(['pneumothorax']);
    });

    it.each(['refuted', 'entered-in-error'])('skips a condition whose verificationStatus is %s', (code) => {
      expect(kindsOf({ text: 'COPD' }, { verificationStatus: { coding: [{ code }] } })).toStrictEqual([]);
    });

    it('counts a condition with no clinicalStatus unless it has abated', () => {
      const read = readConditions([
        { resourceType: 'Condition', id: 'a', code: { text: 'COPD' } },
        { resourceType: 'Condition', id: 'b', code: { text: 'Pneumothorax' }, abatementDateTime: '2024-03-01' },
      ]);
      expect(read.conditions.map((c) => c.kind)).toStrictEqual(['copd']);
    });

    it.each(['No COPD', 'Not pregnant', 'Non-pregnant', 'ruled out COPD', 'Pregnancy test negative'])('skips negated words: "%s"', (text) => {
      expect(kindsOf({ text })).toStrictEqual([]);
    });

    it('does not read ICD-10 T60.3 alone as paraquat poisoning, and says why', () => {
      const read = readConditions([condition('h', { coding: [{ system: ICD10, code: 'T60.3', display: 'Toxic effect of herbicides' }] })]);
      expect(read.conditions).toStrictEqual([]);
      expect(read.notes).toStrictEqual([
        {
          what: 'Toxic effect of herbicides',
          reason: 'unrecognised',
          detail: 'ICD-10 T60.3 does not say which herbicide; paraquat poisoning was not assumed.',
          reference: 'Condition/h',
        },
      ]);
    });

    it('reads ICD-10 T60.3 as paraquat poisoning when the words say paraquat', () => {
      const read = readConditions([condition('h', { coding: [{ system: ICD10, code: 'T60.3' }], text: 'Paraquat poisoning' })]);
      expect(read.conditions.map((c) => c.kind)).toStrictEqual(['paraquat-poisoning']);
      expect(read.notes).toStrictEqual([]);
    });

    it('ignores codes in systems it does not know and resources that are not Conditions', () => {
      const read = readConditions([
        condition('x', { coding: [{ system: 'urn:other', code: 'J44' }] }),
        { resourceType: 'AllergyIntolerance', id: 'a', code: { text: 'COPD' } },
      ]);
      expect(read.conditions).toStrictEqual([]);
    });

    it('survives garbage fields', () => {
      const read = readConditions([
        { resourceType: 'Condition', code: 'COPD', clinicalStatus: 7 },
        { resourceType: 'Condition', code: { coding: 'x', text: 5 }, verificationStatus: { coding: [null] } },
        { resourceType: 'Condition', code: { coding: [{ system: SNOMED, code: 13645005 }] } },
      ]);
      expect(read).toStrictEqual({ conditions: [], notes: [] });
    });
  });
});
