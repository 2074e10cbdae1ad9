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

  describe('the acute conditions of BTS 2017 Table 3 and of acute hypercapnia', () => {
    // SNOMED CT codes from memory (not in check-values §6); kinds: BTS 2017 Table 3 (V).
    it.each([
      ['394659003', 'acute-coronary-syndrome'], // acute coronary syndrome; from memory
      ['22298006', 'acute-coronary-syndrome'], // myocardial infarction; from memory
      ['401303003', 'acute-coronary-syndrome'], // acute STEMI; from memory
      ['401314000', 'acute-coronary-syndrome'], // acute NSTEMI; from memory
      ['4557003', 'acute-coronary-syndrome'], // preinfarction syndrome (unstable angina); from memory
      ['230690007', 'stroke'], // cerebrovascular accident; from memory
    ])('maps SNOMED CT %s to %s', (code, kind) => {
      expect(readConditions([condition('c1', { coding: [{ system: SNOMED, code }] })]).conditions).toStrictEqual([
        { kind, matchedBy: `SNOMED CT ${code}`, display: code, reference: 'Condition/c1' },
      ]);
    });

    it.each([
      [ICD10, 'J46', 'acute-asthma'], // status asthmaticus; from memory
      [ICD10CM, 'J45.51', 'acute-asthma'], // severe persistent asthma with (acute) exacerbation; from memory
      [ICD10CM, 'J45.902', 'acute-asthma'], // unspecified asthma with status asthmaticus; from memory
      [ICD10, 'T40.2', 'sedative-or-opioid-toxicity'], // poisoning by other opioids; from memory
      [ICD10CM, 'T40.1X1A', 'sedative-or-opioid-toxicity'], // heroin poisoning, accidental; from memory
      [ICD10CM, 'T42.4X2A', 'sedative-or-opioid-toxicity'], // benzodiazepine poisoning, self-harm; from memory
      [ICD10, 'I21.4', 'acute-coronary-syndrome'], // acute subendocardial MI; from memory
      [ICD10, 'I20.0', 'acute-coronary-syndrome'], // unstable angina; from memory
      [ICD10, 'I63.9', 'stroke'], // cerebral infarction; from memory
      [ICD10, 'I61.0', 'stroke'], // intracerebral haemorrhage; from memory
      [ICD10, 'I64', 'stroke'], // stroke not specified; from memory
      [ICD10, 'R06.4', 'hyperventilation'], // hyperventilation; from memory
    ])('maps %s %s to %s', (system, code, kind) => {
      const read = readConditions([condition('c1', { coding: [{ system, code, display: 'x' }] })]);
      expect(read.conditions.map((c) => [c.kind, c.matchedBy])).toStrictEqual([[kind, `ICD-10 ${code}`]]);
    });

    it.each([
      [ICD10, 'J45.9'], // asthma, unspecified: a chronic diagnosis; from memory
      [ICD10CM, 'J45.20'], // mild intermittent asthma, uncomplicated; from memory
      [ICD10CM, 'J45.991'], // cough variant asthma; from memory
      [ICD10, 'T40.5'], // cocaine, not an opioid; from memory
      [ICD10CM, 'T40.2X5A'], // adverse effect of other opioids (e.g. constipation); from memory
      [ICD10CM, 'T42.4X6A'], // underdosing of benzodiazepines; from memory
      [ICD10, 'G45.9'], // transient cerebral ischaemic attack: resolved by definition; from memory
      [ICD10, 'I25.2'], // old myocardial infarction; from memory
    ])('does not read %s %s as one of these kinds', (system, code) => {
      expect(kindsOf({ coding: [{ system, code }] })).toStrictEqual([]);
    });

    it.each([
      ['Acute severe asthma', 'acute-asthma'],
      ['Life-threatening asthma', 'acute-asthma'],
      ['Acute exacerbation of asthma', 'acute-asthma'],
      ['Asthma exacerbation', 'acute-asthma'],
      ['Asthma attack', 'acute-asthma'],
      ['Status asthmaticus', 'acute-asthma'],
      ['Moderate persistent asthma with (acute) exacerbation', 'acute-asthma'],
      ['Opioid toxicity', 'sedative-or-opioid-toxicity'],
      ['Benzodiazepine overdose', 'sedative-or-opioid-toxicity'],
      ['Overdose of heroin', 'sedative-or-opioid-toxicity'],
      ['Over-sedation after morphine', 'sedative-or-opioid-toxicity'],
      ['Acute coronary syndrome', 'acute-coronary-syndrome'],
      ['NSTEMI', 'acute-coronary-syndrome'],
      ['Non-ST elevation myocardial infarction', 'acute-coronary-syndrome'],
      ['Inferior STEMI', 'acute-coronary-syndrome'],
      ['Unstable angina', 'acute-coronary-syndrome'],
      ['Acute stroke', 'stroke'],
      ['Left MCA stroke', 'stroke'],
      ['CVA', 'stroke'],
      ['Cerebral infarction', 'stroke'],
      ['Hyperventilation', 'hyperventilation'],
      ['Panic attack', 'hyperventilation'],
      ['Anxiety with breathlessness', 'hyperventilation'],
    ])('recognises the words "%s" as %s', (text, kind) => {
      expect(readConditions([condition('c1', { text })]).conditions).toStrictEqual([
        { kind, matchedBy: `text: '${text}'`, display: text, reference: 'Condition/c1' },
      ]);
    });

    it.each([
      'Asthma', // a chronic diagnosis says nothing about today
      'Severe asthma',
      'Severe persistent asthma',
      'Asthma, no exacerbation',
      'History of acute asthma',
      'Paracetamol overdose', // not a sedative or opioid
      'CO2 narcosis', // hypercapnia, not a drug
      'ACS', // also acute chest syndrome in sickle cell disease
      'MI', // also mitral insufficiency
      'Old myocardial infarction',
      'Previous stroke',
      'Stroke ruled out',
      'No evidence of stroke',
      'Heat stroke',
      'TIA',
      'Transient ischaemic attack',
      'Generalised anxiety disorder', // no breathlessness named
    ])('does not read "%s" as an acute Table 3 or hypercapnia kind', (text) => {
      expect(kindsOf({ text })).toStrictEqual([]);
    });
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
