import type { FhirResource } from '../../../src/fhir/gathered-data.js';
import { condition } from './fhir.js';

/**
 * The sources scenario expectations cite (full citations in policies/based-on-bts-2017.yaml `references`
 * and /work/shared/reference/check-values.md), and the conditions scenarios use. SNOMED CT codes
 * are those of check-values.md §6 (verified); ICD-10 codes marked "from memory" are that.
 */

export const SRC = {
  btsT1: 'BTS 2017, Table 1',
  btsT2: 'BTS 2017, Table 2',
  btsT3: 'BTS 2017, Table 3',
  btsT4: 'BTS 2017, Table 4',
  btsTables: 'BTS 2017, Tables 2-4',
  btsRange: 'BTS 2017: prescribe a target range',
  btsPalliative: 'BTS 2017: in terminal palliative care oxygen is for comfort, not a target',
  btsScope: 'BTS 2017: guideline for adults; policy population.minimumAgeYears 16',
  btsFall: 'BTS 2017 summary (BMJ Open Resp Res 4:e000170): a fall of >= 3 points calls for fuller assessment',
  btsWean: 'BTS 2017 (from memory): oxygen is reduced only when the patient is stable with SpO2 in or above the target range',
  btsRising: 'BTS 2017 (from memory): a rising oxygen requirement calls for clinical review',
  btsHypercapnia: 'BTS 2017 clarification (Thorax 72:588): hypercapnia is PaCO2 >= 6 kPa',
  btsIcs: 'BTS/ICS 2016: pH < 7.35 with PaCO2 > 6.5 kPa: acute hypercapnic respiratory failure, consider NIV',
  btsIcsInvasive: 'BTS/ICS 2016: pH < 7.25: consider invasive ventilation',
  compensated: 'BTS 2017 pathway: pH >= 7.35 with PaCO2 > 6 kPa is compensated; continue controlled oxygen',
  asthma: 'BTS/SIGN asthma guideline (from memory): a normal or raised PaCO2 in acute asthma is life-threatening; BTS 2017 keeps acute asthma at 94-98 %',
  poisoning: 'BTS 2017, Table 3: most poisonings 94-98 %; from memory: opioid hypoventilation needs naloxone and ventilatory support, not less oxygen',
  roca: 'Roca 2019: ROX failure thresholds 2.85 / 3.47 / 3.85 at 2 / 6 / 12 h',
  escalation: 'BTS 2017 (from memory: high oxygen need, senior and critical-care review); policy thresholds.highFlowFailingFio2AtLeast 0.6',
  news2: 'NEWS2, RCP 2017: Scale 2 for confirmed hypercapnic respiratory failure with a 88-92 % target',
  news2Scale1: 'NEWS2, RCP 2017: all other patients, including COPD without hypercapnia, use Scale 1',
  bmj: 'BMJ 2018: do not start oxygen at SpO2 >= 93 % in stroke or MI',
  tsanz: 'TSANZ 2015: 92-96 % for most acute medical patients, 88-92 % with chronic CO2 retention',
  jensen: 'Jensen 1991: a simple face mask below 5 L/min causes rebreathing',
  cannula: 'BTS 2017, Tables 2 and 4: nasal cannula 1-6 L/min',
  venturiRr: 'BTS 2017, Table 4 (Jones 1984): RR > 30/min, raise Venturi O2 flow to 1.5 x the minimum',
  venturiMin: 'BTS 2017, Table 4 (24 % at 2-3 L/min, 28 % at 4 L/min); device labelling, common practice',
  fio2Envelope: 'check-values.md §2a: nasal cannula 1-4 L/min gives FiO2 about 0.24-0.36 (Therapeutic Guidelines; rule of 4, common practice)',
  cdsOnly: 'common practice: a suggestion changes only what it names (CDS Hooks 2.0 update action replaces the whole resource)',
  alertFatigue: 'common practice: a correct order at target needs no warning (alert fatigue)',
  grouping: 'common practice: results of one sample filed minutes apart are one gas (policy freshness.bloodGasGroupingMinutes 10)',
  common: 'common practice',
} as const;

// --- at risk of hypercapnic respiratory failure (BTS 2017 Table 4) ------------------------------
export const copd = (): FhirResource => condition({ text: 'Chronic obstructive lung disease', snomed: '13645005' });
export const copdIcd = (): FhirResource => condition({ text: 'COPD with acute exacerbation', icd10: 'J44.1' });
export const bronchiectasis = (): FhirResource => condition({ text: 'Bronchiectasis', snomed: '12295008' });
export const cysticFibrosis = (): FhirResource => condition({ text: 'Cystic fibrosis', snomed: '190905008' });
export const kyphoscoliosis = (): FhirResource => condition({ text: 'Kyphoscoliosis deformity of spine', snomed: '405773007' });
export const motorNeuronDisease = (): FhirResource => condition({ text: 'Motor neuron disease', snomed: '37340000' });
export const obesityHypoventilation = (): FhirResource => condition({ text: 'Obesity hypoventilation syndrome', snomed: '190966007' });
export const morbidObesity = (): FhirResource => condition({ text: 'Morbid obesity' });
export const myasthenia = (): FhirResource => condition({ text: 'Myasthenia gravis', icd10: 'G70.0' }); // ICD-10 from memory
export const previousNiv = (): FhirResource =>
  condition({ text: 'Previous NIV for hypercapnic respiratory failure', status: 'resolved' });
export const chronicType2 = (): FhirResource => condition({ text: 'Chronic respiratory failure with hypercapnia', icd10: 'J96.12' });

// --- acute illnesses where a raised PCO2 means tiring (issue 6 class 2) --------------------------
export const acuteAsthma = (): FhirResource => condition({ text: 'Acute severe asthma', icd10: 'J46' }); // ICD-10 from memory
export const opioidToxicity = (): FhirResource => condition({ text: 'Opioid toxicity', icd10: 'T40.2' }); // ICD-10 from memory
export const benzodiazepineOverdose = (): FhirResource => condition({ text: 'Benzodiazepine overdose (sedative toxicity)' });

// --- oxygen only if hypoxaemic (BTS 2017 Table 3; Table 2 for sickle cell) -----------------------
export const acs = (): FhirResource => condition({ text: 'Acute coronary syndrome', icd10: 'I24.9' }); // ICD-10 from memory
export const stemi = (): FhirResource => condition({ text: 'Acute myocardial infarction', icd10: 'I21.9' }); // ICD-10 from memory
export const stroke = (): FhirResource => condition({ text: 'Acute ischaemic stroke', icd10: 'I63.9' }); // ICD-10 from memory
export const pregnancy = (): FhirResource => condition({ text: 'Pregnant, 32 weeks' });
export const hyperventilation = (): FhirResource => condition({ text: 'Hyperventilation due to anxiety', icd10: 'R06.4' }); // ICD-10 from memory
export const sickleCrisis = (): FhirResource => condition({ text: 'Sickle cell crisis', icd10: 'D57.0' });

// --- special situations (BTS 2017 Tables 1-3) ---------------------------------------------------
export const carbonMonoxide = (): FhirResource => condition({ text: 'Carbon monoxide poisoning', icd10: 'T58' });
export const pneumothorax = (): FhirResource => condition({ text: 'Primary spontaneous pneumothorax', icd10: 'J93.1' });
export const clusterHeadache = (): FhirResource => condition({ text: 'Cluster headache', icd10: 'G44.0' });
export const paraquat = (): FhirResource => condition({ text: 'Paraquat poisoning', icd10: 'T60.3' });
export const bleomycin = (): FhirResource => condition({ text: 'Bleomycin lung injury' });

// --- other illnesses with no effect on the target -----------------------------------------------
export const pneumonia = (): FhirResource => condition({ text: 'Community-acquired pneumonia', icd10: 'J18.9' });
export const pulmonaryEmbolism = (): FhirResource => condition({ text: 'Pulmonary embolism', icd10: 'I26.9' });
export const heartFailure = (): FhirResource => condition({ text: 'Acute heart failure with pulmonary oedema', icd10: 'I50.1' });
export const sepsis = (): FhirResource => condition({ text: 'Sepsis, urinary source', icd10: 'A41.9' });
export const lungCancer = (): FhirResource => condition({ text: 'Metastatic lung cancer, end-of-life care', icd10: 'C34.9' });
export const postOp = (): FhirResource => condition({ text: 'Day 1 after laparoscopic cholecystectomy' });
