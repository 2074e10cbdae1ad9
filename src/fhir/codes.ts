import type { ConditionKind, DeviceKind } from '../core/types.js';

/**
 * Code systems and the codes the reader recognises. Codes come from check-values.md §6 (status V)
 * unless the comment says "from memory". Nothing here is invented: a concept without a code we are
 * sure of is recognised by its words instead (see read-conditions.ts and read-device-text.ts).
 */

/**
 * A frozen code table with no prototype, so a code sent as `constructor` or `__proto__` finds
 * nothing rather than an Object.prototype member (which once reached the readers and threw).
 */
function lookupTable<T>(entries: Readonly<Record<string, T>>): Readonly<Record<string, T>> {
  return Object.freeze(Object.assign(Object.create(null) as Record<string, T>, entries));
}

export const SYSTEMS = {
  loinc: 'http://loinc.org',
  snomed: 'http://snomed.info/sct',
  rxnorm: 'http://www.nlm.nih.gov/research/umls/rxnorm',
  ucum: 'http://unitsofmeasure.org',
} as const;

/** ICD-10 comes under several system URIs (WHO, -CM, national editions); all contain "icd-10". */
export function isIcd10System(system: string | undefined): boolean {
  return system !== undefined && /icd-?10/i.test(system);
}

/** Oxygen as a medication, and oxygen therapy as a procedure. */
export const OXYGEN_CODES = {
  /** SNOMED CT Oxygen (substance). */
  oxygenSubstance: '24099007',
  /** RxNorm Oxygen (ingredient). */
  oxygenRxnorm: '7806',
  /** SNOMED CT Oxygen therapy (procedure). */
  oxygenTherapy: '57485005',
  /** SNOMED CT Oxygen administration by nasal cannula (procedure): also names the device. */
  oxygenByNasalCannula: '371907003',
} as const;

/** SNOMED CT procedure codes that name a device as well as the therapy. */
export const SNOMED_DEVICE_BY_CODE: Readonly<Record<string, DeviceKind>> = lookupTable({
  [OXYGEN_CODES.oxygenByNasalCannula]: 'nasal-cannula',
});

export type MeasuredKind = 'spo2' | 'fio2' | 'o2-flow' | 'resp-rate' | 'haemoglobin' | 'bmi';
export type GasField = 'ph' | 'po2' | 'pco2' | 'hco3' | 'baseExcess';
export type Specimen = 'arterial' | 'venous' | 'unknown';

export type ObservationCode =
  | { readonly kind: MeasuredKind; readonly label: string }
  | { readonly kind: 'gas'; readonly field: GasField; readonly specimen: Specimen; readonly label: string };

/** LOINC codes read from Observations (value or component). */
export const LOINC_OBSERVATIONS: Readonly<Record<string, ObservationCode>> = lookupTable({
  '59408-5': { kind: 'spo2', label: 'SpO2' }, // pulse oximetry (US Core)
  '2708-6': { kind: 'spo2', label: 'SpO2' }, // FHIR core oxygensat profile
  '3150-0': { kind: 'fio2', label: 'FiO2' },
  '3151-8': { kind: 'o2-flow', label: 'Oxygen flow' },
  '9279-1': { kind: 'resp-rate', label: 'Respiratory rate' },
  '718-7': { kind: 'haemoglobin', label: 'Haemoglobin' },
  '39156-5': { kind: 'bmi', label: 'BMI' }, // from memory (LOINC body mass index)
  '2744-1': { kind: 'gas', field: 'ph', specimen: 'arterial', label: 'Arterial pH' },
  '2703-7': { kind: 'gas', field: 'po2', specimen: 'arterial', label: 'PaO2' },
  '2019-8': { kind: 'gas', field: 'pco2', specimen: 'arterial', label: 'PaCO2' },
  '1960-4': { kind: 'gas', field: 'hco3', specimen: 'arterial', label: 'Arterial HCO3' },
  '1925-7': { kind: 'gas', field: 'baseExcess', specimen: 'arterial', label: 'Arterial base excess' },
  '2746-6': { kind: 'gas', field: 'ph', specimen: 'venous', label: 'Venous pH' },
  '2705-2': { kind: 'gas', field: 'po2', specimen: 'venous', label: 'Venous pO2' },
  '2021-4': { kind: 'gas', field: 'pco2', specimen: 'venous', label: 'Venous pCO2' }, // from memory
  '11557-6': { kind: 'gas', field: 'pco2', specimen: 'unknown', label: 'Blood pCO2' },
  '1963-8': { kind: 'gas', field: 'hco3', specimen: 'unknown', label: 'Serum HCO3' },
  '11555-0': { kind: 'gas', field: 'baseExcess', specimen: 'unknown', label: 'Blood base excess' },
});

/** LOINC arterial blood gas panel: its `hasMember` links the values of one sample. */
export const LOINC_ABG_PANEL = '24336-0';

/** SNOMED CT disorder codes mapped to our condition kinds. */
export const SNOMED_CONDITIONS: Readonly<Record<string, ConditionKind>> = lookupTable({
  '13645005': 'copd',
  '12295008': 'bronchiectasis',
  '190905008': 'cystic-fibrosis',
  '405773007': 'chest-wall-deformity', // kyphoscoliosis deformity of spine
  '203638000': 'chest-wall-deformity', // kyphoscoliosis and scoliosis
  '298382003': 'chest-wall-deformity', // scoliosis deformity of spine
  '37340000': 'neuromuscular-disease', // motor neuron disease
  '257277002': 'neuromuscular-disease', // combined disorder of muscle and peripheral nerve
  '256321009': 'neuromuscular-disease', // disorder of neuromuscular transmission
  '190966007': 'obesity-hypoventilation',
  // BTS 2017 Table 3 conditions. Codes from memory (each also seen in public code lists); a concept
  // whose code we are not sure of (acute asthma, opioid toxicity, hyperventilation) is read by words.
  '394659003': 'acute-coronary-syndrome', // acute coronary syndrome; from memory
  '22298006': 'acute-coronary-syndrome', // myocardial infarction; from memory
  '401303003': 'acute-coronary-syndrome', // acute ST segment elevation myocardial infarction; from memory
  '401314000': 'acute-coronary-syndrome', // acute non-ST segment elevation myocardial infarction; from memory
  '4557003': 'acute-coronary-syndrome', // preinfarction syndrome (unstable angina); from memory
  '230690007': 'stroke', // cerebrovascular accident; from memory
});

/**
 * ICD-10 code prefixes (dots removed) mapped to condition kinds. A longer prefix wins, so E66.01 is
 * morbid obesity and E66.2 is obesity hypoventilation. Codes are from the brief and check-values §6
 * (J96.12/J96.22) unless marked "from memory".
 */
export const ICD10_CONDITION_PREFIXES: ReadonlyArray<readonly [string, ConditionKind]> = [
  ['J44', 'copd'],
  ['J43', 'copd'], // emphysema; from memory
  ['J47', 'bronchiectasis'],
  ['E84', 'cystic-fibrosis'],
  ['G122', 'neuromuscular-disease'], // motor neuron disease
  ['G700', 'neuromuscular-disease'], // myasthenia gravis; from memory
  ['G710', 'neuromuscular-disease'], // muscular dystrophy; from memory
  ['M41', 'chest-wall-deformity'], // scoliosis; from memory
  ['E662', 'obesity-hypoventilation'],
  ['E6601', 'morbid-obesity'], // ICD-10-CM morbid obesity due to excess calories
  ['J9612', 'chronic-hypercapnic-respiratory-failure'], // ICD-10-CM
  ['J9622', 'chronic-hypercapnic-respiratory-failure'], // ICD-10-CM
  ['T58', 'carbon-monoxide-poisoning'],
  ['G440', 'cluster-headache'],
  ['J93', 'pneumothorax'],
  ['S270', 'pneumothorax'], // traumatic pneumothorax; from memory
  ['D570', 'sickle-cell-crisis'],
  ['O', 'pregnancy'], // chapter O: pregnancy, childbirth and the puerperium
  // Acute asthma, not asthma as a chronic diagnosis: J45 alone is not read (see read-conditions.ts).
  ['J46', 'acute-asthma'], // status asthmaticus (acute severe asthma), WHO ICD-10; from memory
  ['J4521', 'acute-asthma'], // ICD-10-CM J45.x1 with (acute) exacerbation, J45.x2 with status asthmaticus; from memory
  ['J4522', 'acute-asthma'],
  ['J4531', 'acute-asthma'],
  ['J4532', 'acute-asthma'],
  ['J4541', 'acute-asthma'],
  ['J4542', 'acute-asthma'],
  ['J4551', 'acute-asthma'],
  ['J4552', 'acute-asthma'],
  ['J45901', 'acute-asthma'],
  ['J45902', 'acute-asthma'],
  // Poisoning by opioids (T40.5 is cocaine and is left out) and by sedatives; from memory.
  ['T400', 'sedative-or-opioid-toxicity'], // opium
  ['T401', 'sedative-or-opioid-toxicity'], // heroin
  ['T402', 'sedative-or-opioid-toxicity'], // other opioids
  ['T403', 'sedative-or-opioid-toxicity'], // methadone
  ['T404', 'sedative-or-opioid-toxicity'], // other synthetic narcotics
  ['T406', 'sedative-or-opioid-toxicity'], // other and unspecified narcotics
  ['T423', 'sedative-or-opioid-toxicity'], // barbiturates
  ['T424', 'sedative-or-opioid-toxicity'], // benzodiazepines
  ['I200', 'acute-coronary-syndrome'], // unstable angina; from memory
  ['I21', 'acute-coronary-syndrome'], // acute myocardial infarction; from memory
  ['I22', 'acute-coronary-syndrome'], // subsequent myocardial infarction; from memory
  ['I61', 'stroke'], // intracerebral haemorrhage; from memory
  ['I63', 'stroke'], // cerebral infarction; from memory
  ['I64', 'stroke'], // stroke, not specified as haemorrhage or infarction (WHO ICD-10); from memory
  ['R064', 'hyperventilation'], // hyperventilation; from memory
];

/**
 * ICD-10-CM codes the poisoning chapter (T36–T50) with a sixth character 5 (adverse effect of a
 * drug properly given) or 6 (underdosing) do not record toxicity: T40.2X6A is too little of an
 * opioid, T40.2X5A can be constipation. From memory of the ICD-10-CM layout.
 */
export function isAdverseEffectOrUnderdosing(bareCode: string): boolean {
  return /^T(?:3[6-9]|4\d|50)/.test(bareCode) && (bareCode[5] === '5' || bareCode[5] === '6');
}

/**
 * ICD-10 T60.3 (from memory) is the toxic effect of herbicides and fungicides in general. It is read
 * as paraquat poisoning only when the words also say paraquat, because that diagnosis lowers the
 * target to 85–88 % and most herbicide poisonings do not call for that.
 */
export const ICD10_HERBICIDE_PREFIX = 'T603';

/**
 * The base of this service's FHIR canonical URLs (its extension and code systems). The project owns no
 * domain, so the base sits under example.org, a name reserved for this use (RFC 2606) and never
 * registered by anyone else. A canonical URL is an identifier: the service never fetches it.
 */
export const CANONICAL_BASE = 'https://oxygen-order-checker.example.org/fhir';

export const EXTENSION_URLS = {
  targetSaturation: `${CANONICAL_BASE}/StructureDefinition/target-oxygen-saturation`,
} as const;

/**
 * The private URN the target extension had before version 0.2. Orders drafted then may still carry it,
 * so it is read as the same extension; it is never written.
 */
export const RETIRED_TARGET_EXTENSION_URL = 'urn:oxygen-order-checker:fhir:StructureDefinition:target-oxygen-saturation';

/** Whether an extension url is this service's target-saturation extension, under its current or retired name. */
export function isTargetExtensionUrl(url: string | undefined): boolean {
  return url === EXTENSION_URLS.targetSaturation || url === RETIRED_TARGET_EXTENSION_URL;
}
