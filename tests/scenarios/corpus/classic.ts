import type { FhirResource } from '../../../src/fhir/gathered-data.js';
import * as c from '../support/clinical.js';
import { SRC } from '../support/clinical.js';
import {
  ago,
  bloodGas,
  deviceOrder,
  medicationOrder,
  onRecord,
  respRate,
  serviceOrder,
  spo2,
  spo2OnFlow,
} from '../support/fhir.js';
import {
  atMost,
  fires,
  neverSays,
  noLessOxygen,
  once,
  scenario,
  shortDetail,
  silent,
  type Scenario,
} from '../support/scenario.js';

/**
 * The classic situations (BTS 2017 special cases, device limits, duplicates, titration against the
 * range, the TSANZ preset) and class 12's "two drafts signed together" and needless data cards.
 */

export const CLASSIC: readonly Scenario[] = [
  // --- BTS 2017 special situations --------------------------------------------------------------
  scenario({
    id: 'carbon-monoxide-reservoir-with-target',
    story: 'Carbon monoxide poisoning on reservoir mask 15 L/min, SpO2 99 %, order says 94-98 %',
    pov: 'ward doctor', topic: 'classic: carbon monoxide', age: 34,
    build: () => ({
      drafts: [serviceOrder('Oxygen 15 L/min via non-rebreather mask, target SpO2 94-98%')],
      record: [...spo2OnFlow(99, 15), respRate(20), c.carbonMonoxide()],
    }),
    expect: [
      fires('carbon-monoxide-oximetry', 'critical', `${SRC.btsT1}: ignore the oximeter, no SpO2 target`),
      silent('spo2-above-target', SRC.btsT1),
      noLessOxygen(SRC.btsT1),
    ],
  }),
  scenario({
    id: 'carbon-monoxide-no-target',
    story: 'Carbon monoxide poisoning on reservoir mask 15 L/min with no target written, SpO2 100 %',
    pov: 'pharmacist', topic: 'classic: carbon monoxide', age: 41,
    build: () => ({
      drafts: [medicationOrder('Oxygen 15 L/min via reservoir mask', { method: 'Reservoir mask', flowLPerMin: 15 })],
      record: [...spo2OnFlow(100, 15), respRate(18), c.carbonMonoxide()],
    }),
    expect: [
      fires('carbon-monoxide-oximetry', 'warning', SRC.btsT1),
      silent('target-range-missing', `${SRC.btsT1}: no SpO2 target applies`),
      noLessOxygen(SRC.btsT1),
    ],
  }),
  scenario({
    id: 'pneumothorax-on-cannula',
    story: 'Spontaneous pneumothorax admitted for observation, nasal cannula 2 L/min with 94-98 %, SpO2 97 %',
    pov: 'ward doctor', topic: 'classic: pneumothorax', age: 24,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(97), respRate(18), c.pneumothorax()],
    }),
    expect: [fires('pneumothorax-oxygen', 'info', `${SRC.btsT2}: reservoir mask 15 L/min, aim for 100 %`)],
  }),
  scenario({
    id: 'pneumothorax-on-reservoir',
    story: 'Pneumothorax under observation on reservoir mask 15 L/min, SpO2 100 %: as BTS advises',
    pov: 'respiratory therapist', topic: 'classic: pneumothorax', age: 29, benign: true,
    build: () => ({
      drafts: [serviceOrder('Oxygen 15 L/min via non-rebreather mask, aim for SpO2 100% (pneumothorax resorption)')],
      record: [...spo2OnFlow(100, 15), respRate(16), c.pneumothorax()],
    }),
    expect: [silent('spo2-above-target', SRC.btsT2), silent('high-oxygen-requirement', SRC.btsT2)],
  }),
  scenario({
    id: 'cluster-headache-reservoir',
    story: 'Cluster headache attack: reservoir mask 12 L/min for 15 min, SpO2 99 %',
    pov: 'pharmacist', topic: 'classic: cluster headache', age: 38, benign: true,
    build: () => ({
      drafts: [medicationOrder('Oxygen 12 L/min via non-rebreather mask for 15 minutes', { method: 'Non-rebreather mask', flowLPerMin: 12 })],
      record: [spo2(99), respRate(16), c.clusterHeadache()],
    }),
    expect: [
      silent('spo2-above-target', 'BTS 2017 (quoted secondarily): exempt from the SpO2 target'),
      silent('high-oxygen-requirement', 'BTS 2017 (quoted secondarily): high flow is the treatment'),
      silent('target-range-missing', 'BTS 2017 (quoted secondarily): given without hypoxaemia'),
    ],
  }),
  scenario({
    id: 'cluster-headache-on-cannula',
    story: 'Cluster headache with oxygen ordered at 2 L/min by nasal cannula',
    pov: 'ward doctor', topic: 'classic: cluster headache', age: 45,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(98), respRate(16), c.clusterHeadache()],
    }),
    expect: [fires('cluster-headache-oxygen', 'info', 'BTS 2017 (quoted secondarily): 12-15 L/min by reservoir mask')],
  }),
  scenario({
    id: 'paraquat-standard-target',
    story: 'Paraquat ingestion, nasal cannula 2 L/min with 94-98 % ordered, SpO2 96 %',
    pov: 'pharmacist', topic: 'classic: oxygen toxicity', age: 36,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(96), respRate(18), c.paraquat()],
    }),
    expect: [fires('oxygen-toxicity-target', 'warning', `${SRC.btsT3} (V2): target 85-88 %`)],
  }),
  scenario({
    id: 'paraquat-low-target-ordered',
    story: 'Paraquat ingestion, "oxygen only if SpO2 below 85%, target 85-88%", 1 L/min, SpO2 86 %',
    pov: 'ward doctor', topic: 'classic: oxygen toxicity', age: 42, benign: true,
    build: () => ({
      drafts: [serviceOrder('Oxygen 1 L/min via nasal cannula only if SpO2 below 85%, target SpO2 85-88%')],
      record: [spo2(86), respRate(18), c.paraquat()],
    }),
    expect: [silent('oxygen-toxicity-target', SRC.btsT3), silent('lower-range-without-risk', SRC.btsT3)],
  }),
  scenario({
    id: 'bleomycin-standard-target',
    story: 'Previous bleomycin lung injury, face mask 5 L/min with 94-98 %, SpO2 97 %',
    pov: 'pharmacist', topic: 'classic: oxygen toxicity', age: 33,
    build: () => ({
      drafts: [serviceOrder('Oxygen 5 L/min via simple face mask, target SpO2 94-98%')],
      record: [spo2(97), respRate(18), c.bleomycin()],
    }),
    expect: [fires('oxygen-toxicity-target', 'warning', `${SRC.btsT3} (V2): target 85-88 %`)],
  }),

  // --- devices ----------------------------------------------------------------------------------
  scenario({
    id: 'venturi-40-tachypnoea',
    story: 'Pneumonia on 40 % Venturi at 10 L/min with RR 34',
    pov: 'respiratory therapist', topic: 'classic: Venturi', age: 60,
    build: () => ({
      drafts: [serviceOrder('Venturi 40% at 10 L/min, target SpO2 94-98%')],
      record: [spo2(94), respRate(34), c.pneumonia()],
    }),
    expect: [fires('venturi-flow-insufficient', 'warning', SRC.venturiRr), noLessOxygen(SRC.venturiRr)],
  }),
  scenario({
    id: 'venturi-24-copd-tachypnoea',
    story: 'COPD on 24 % Venturi at 2 L/min with RR 32',
    pov: 'ward doctor', topic: 'classic: Venturi', age: 71,
    build: () => ({
      drafts: [serviceOrder('Venturi 24% at 2 L/min, target SpO2 88-92%')],
      record: [spo2(89), respRate(32), c.copd()],
    }),
    expect: [fires('venturi-flow-insufficient', 'warning', SRC.venturiRr)],
  }),
  scenario({
    id: 'venturi-28-flow-too-low',
    story: 'COPD on 28 % Venturi but only 2 L/min of oxygen (minimum 4 L/min)',
    pov: 'respiratory therapist', topic: 'classic: Venturi', age: 69,
    build: () => ({
      drafts: [deviceOrder('Venturi mask', { flowLPerMin: 2, fio2Percent: 28, note: 'Target SpO2 88-92%' })],
      record: [spo2(90), respRate(20), c.copd()],
    }),
    expect: [fires('venturi-flow-insufficient', 'warning', SRC.venturiMin)],
  }),
  scenario({
    id: 'face-mask-2l-rebreathing',
    story: 'Simple face mask at 2 L/min for pneumonia',
    pov: 'pharmacist', topic: 'classic: device range', age: 66,
    build: () => ({
      drafts: [medicationOrder('Oxygen 2 L/min via simple face mask, target SpO2 94-98%', { method: 'Simple face mask', flowLPerMin: 2 })],
      record: [spo2(95), respRate(20), c.pneumonia()],
    }),
    expect: [fires('flow-outside-device-range', 'warning', SRC.jensen)],
  }),
  scenario({
    id: 'cannula-8l-too-high',
    story: 'Nasal cannula at 8 L/min for pneumonia',
    pov: 'respiratory therapist', topic: 'classic: device range', age: 52,
    build: () => ({
      drafts: [serviceOrder('Oxygen 8 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(94), respRate(24), c.pneumonia()],
    }),
    expect: [fires('flow-outside-device-range', 'warning', SRC.cannula)],
  }),
  scenario({
    id: 'copd-reservoir-mask-uncontrolled',
    story: 'COPD on a reservoir mask at 15 L/min, 88-92 % ordered, SpO2 95 %',
    pov: 'ward doctor', topic: 'classic: uncontrolled oxygen', age: 74,
    build: () => ({
      drafts: [serviceOrder('Oxygen 15 L/min via non-rebreather mask, target SpO2 88-92%')],
      record: [spo2(95), respRate(22), c.copd()],
    }),
    expect: [fires('uncontrolled-oxygen-at-risk', 'warning', SRC.btsT4)],
  }),
  scenario({
    id: 'copd-reservoir-mask-hypercapnic',
    story: 'COPD with PaCO2 7.3 kPa on a reservoir mask at 15 L/min, 88-92 %, SpO2 96 %',
    pov: 'respiratory therapist', topic: 'classic: uncontrolled oxygen', age: 70,
    build: () => ({
      drafts: [serviceOrder('Oxygen 15 L/min via non-rebreather mask, target SpO2 88-92%')],
      record: [spo2(96), respRate(22), c.copd(), bloodGas({ ph: 7.36, pco2: 7.3, po2: 12.5, hco3: 31 })],
    }),
    expect: [fires('uncontrolled-oxygen-at-risk', 'critical', `${SRC.btsT4}; ${SRC.btsHypercapnia}`)],
  }),

  scenario({
    id: 'copd-reservoir-mask-far-below-target',
    story: 'COPD on a reservoir mask at 15 L/min, SpO2 80 % against 88-92 %: no switch to a 28 % Venturi while this low',
    pov: 'respiratory therapist', topic: 'found by the properties', age: 68,
    build: () => ({
      drafts: [serviceOrder('Oxygen 15 L/min via non-rebreather mask, target SpO2 88-92%')],
      record: [spo2(80), respRate(30), c.copd()],
    }),
    expect: [
      fires('spo2-below-target', 'critical', `${SRC.btsT2}: SpO2 < 85 %`),
      noLessOxygen(`${SRC.btsT4}: a Venturi replaces a reservoir mask only once SpO2 is within range`),
    ],
  }),
  scenario({
    id: 'copd-acidotic-reservoir-mask-far-below-target',
    story: 'COPD with pH 7.30 and PaCO2 8.0 kPa on a reservoir mask, SpO2 80 %: no switch to a 28 % Venturi while this low',
    pov: 'ward doctor', topic: 'found by the properties', age: 71,
    build: () => ({
      drafts: [serviceOrder('Oxygen 15 L/min via non-rebreather mask, target SpO2 88-92%')],
      record: [spo2(80), respRate(30), c.copd(), bloodGas({ ph: 7.3, pco2: 8.0, po2: 6.4, hco3: 29 })],
    }),
    expect: [
      fires('acute-hypercapnic-acidosis', 'critical', SRC.btsIcs),
      noLessOxygen(`${SRC.btsT4}: a Venturi replaces a reservoir mask only once SpO2 is within range; BTS 2017: never withdraw oxygen from a hypoxaemic patient`),
    ],
  }),
  scenario({
    id: 'lower-range-ordered-saturation-85',
    story: 'Pneumonia, no hypercapnic risk, 88-92 % ordered, SpO2 85 % on 1 L/min: far below the range that applies',
    pov: 'ward doctor', topic: 'found by the properties', age: 52,
    build: () => ({
      drafts: [serviceOrder('Oxygen 1 L/min via nasal cannula, target SpO2 88-92%')],
      record: [...spo2OnFlow(85, 1), respRate(22), c.pneumonia()],
    }),
    expect: [
      fires('spo2-below-target', 'critical', `${SRC.btsTables}: 94-98 % applies without risk; policy criticalPointsBelowTarget 4 (local choice)`),
      fires('lower-range-without-risk', 'info', SRC.btsTables),
      noLessOxygen(SRC.btsTables),
    ],
  }),

  // --- the target against the patient -----------------------------------------------------------
  scenario({
    id: 'kyphoscoliosis-hypercapnic-standard-target',
    story: 'Kyphoscoliosis with PaCO2 6.7 kPa, nasal cannula 3 L/min with 94-98 %',
    pov: 'pharmacist', topic: 'classic: target', age: 64,
    build: () => ({
      drafts: [serviceOrder('Oxygen 3 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(93), respRate(22), c.kyphoscoliosis(), bloodGas({ ph: 7.37, pco2: 6.7, po2: 8.1, hco3: 30 })],
    }),
    expect: [fires('target-above-hypercapnic-range', 'critical', `${SRC.btsT4}; ${SRC.btsHypercapnia}`)],
  }),
  scenario({
    id: 'copd-no-gas-standard-target',
    story: 'COPD with no gas yet, nasal cannula 2 L/min with 94-98 %',
    pov: 'ward doctor', topic: 'classic: target', age: 77,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(94), respRate(20), c.copd()],
    }),
    expect: [
      fires('target-above-hypercapnic-range', 'warning', SRC.btsT4),
      neverSays(/no current blood gas \(hypercapnia/i, 'issue 6 class 12: no garbled lines (common practice)'),
    ],
  }),
  scenario({
    id: 'face-mask-no-target',
    story: 'Pneumonia on a simple face mask at 6 L/min with no target written',
    pov: 'pharmacist', topic: 'classic: target', age: 59,
    build: () => ({
      drafts: [medicationOrder('Oxygen 6 L/min via simple face mask', { method: 'Simple face mask', flowLPerMin: 6 })],
      record: [spo2(95), respRate(20), c.pneumonia()],
    }),
    expect: [fires('target-range-missing', 'warning', SRC.btsRange)],
  }),
  scenario({
    id: 'lower-range-no-risk',
    story: 'Pneumonia, no hypercapnic risk, 88-92 % ordered on 2 L/min, SpO2 90 %',
    pov: 'respiratory therapist', topic: 'classic: target', age: 45,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 88-92%')],
      record: [spo2(90), respRate(18), c.pneumonia()],
    }),
    expect: [fires('lower-range-without-risk', 'info', `${SRC.btsTables}: 94-98 % without hypercapnic risk`)],
  }),

  // --- titration against the range ---------------------------------------------------------------
  scenario({
    id: 'pneumonia-below-target',
    story: 'Pneumonia on 2 L/min, SpO2 91 % against 94-98 %',
    pov: 'ward doctor', topic: 'classic: titration', age: 63,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnFlow(91, 2), respRate(22), c.pneumonia()],
    }),
    expect: [fires('spo2-below-target', 'warning', SRC.btsTables), noLessOxygen(SRC.btsTables)],
  }),
  scenario({
    id: 'pneumonia-far-below-target',
    story: 'Pneumonia on 4 L/min, SpO2 83 %: critically low',
    pov: 'respiratory therapist', topic: 'classic: titration', age: 71,
    build: () => ({
      drafts: [serviceOrder('Oxygen 4 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnFlow(83, 4), respRate(28), c.pneumonia()],
    }),
    expect: [fires('spo2-below-target', 'critical', `${SRC.btsT2}: SpO2 < 85 %`), noLessOxygen(SRC.btsT2)],
  }),
  scenario({
    id: 'copd-below-target',
    story: 'COPD on 24 % Venturi, SpO2 85 % against 88-92 %',
    pov: 'pharmacist', topic: 'classic: titration', age: 76,
    build: () => ({
      drafts: [serviceOrder('Venturi 24% at 2 L/min, target SpO2 88-92%')],
      record: [spo2(85), respRate(22), c.copd()],
    }),
    expect: [fires('spo2-below-target', 'warning', SRC.btsT4), noLessOxygen(SRC.btsT4)],
  }),
  scenario({
    id: 'copd-above-target-cannula',
    story: 'COPD on 2 L/min nasal cannula, SpO2 96 % against 88-92 %',
    pov: 'ward doctor', topic: 'classic: titration', age: 73,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 88-92%')],
      record: [...spo2OnFlow(96, 2), respRate(18), c.copd()],
    }),
    expect: [fires('spo2-above-target', 'warning', `${SRC.btsT4}; Echevarria 2021 (SpO2 > 92 % in AECOPD)`)],
  }),
  scenario({
    id: 'pneumonia-above-target',
    story: 'Pneumonia on 3 L/min, SpO2 100 % against 94-98 %',
    pov: 'pharmacist', topic: 'classic: titration', age: 50,
    build: () => ({
      drafts: [serviceOrder('Oxygen 3 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnFlow(100, 3), respRate(16), c.pneumonia()],
    }),
    expect: [fires('spo2-above-target', 'info', `${SRC.btsTables}; BMJ 2018 (SpO2 <= 96 %)`)],
  }),
  scenario({
    id: 'no-recent-spo2',
    story: 'Pneumonia, last SpO2 six hours ago, nasal cannula 2 L/min with 94-98 %',
    pov: 'respiratory therapist', topic: 'classic: titration', age: 62,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(95, 360), respRate(18, 360), c.pneumonia()],
    }),
    expect: [fires('no-recent-spo2', 'info', 'common practice: policy freshness.vitalSignsMinutes 240'), atMost('info', SRC.alertFatigue)],
  }),

  // --- duplicates and two drafts ----------------------------------------------------------------
  scenario({
    id: 'duplicate-active-cannula-new-venturi',
    story: 'COPD: nasal cannula 2 L/min active on record, a 28 % Venturi order now being signed',
    pov: 'pharmacist', topic: 'classic: duplicates', age: 72,
    build: () => ({
      drafts: [serviceOrder('Venturi 28% at 4 L/min, target SpO2 88-92%')],
      record: [onRecord(serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 88-92%'), 600), spo2(89), respRate(20), c.copd()],
    }),
    expect: [fires('duplicate-oxygen-order', 'warning', 'common practice: one oxygen order at a time')],
  }),
  scenario({
    id: 'two-drafts-signed-together',
    story: 'COPD with hypercapnic acidosis: a nasal cannula order and a Venturi order signed together',
    pov: 'ward doctor', topic: 'class 12: two drafts', age: 70,
    build: () => ({
      drafts: [
        serviceOrder('Oxygen 1 L/min via nasal cannula, target SpO2 88-92%'),
        serviceOrder('Venturi 24% at 2 L/min, target SpO2 88-92%'),
      ],
      record: [spo2(88), respRate(24), c.copd(), bloodGas({ ph: 7.31, pco2: 7.9, po2: 7.4, hco3: 31 })],
    }),
    expect: [
      fires('acute-hypercapnic-acidosis', 'critical', SRC.btsIcs),
      once('acute-hypercapnic-acidosis', 'issue 6 class 12: a patient-level card is not repeated (common practice)'),
      fires('duplicate-oxygen-order', 'warning', 'common practice: one oxygen order at a time'),
      once('duplicate-oxygen-order', 'issue 6 class 12: a card is not repeated when two drafts are signed together (common practice)'),
    ],
  }),
  scenario({
    id: 'two-drafts-repeat-gas-once',
    story: 'Kyphoscoliosis with PaCO2 6.6 kPa: two oxygen drafts signed together, one repeat-gas reminder',
    pov: 'respiratory therapist', topic: 'class 12: two drafts', age: 60,
    build: () => ({
      drafts: [
        serviceOrder('Oxygen 1 L/min via nasal cannula, target SpO2 88-92%'),
        medicationOrder('Venturi 24% 2 L/min, target SpO2 88-92%', { method: 'Venturi mask 24%', flowLPerMin: 2 }),
      ],
      record: [spo2(90), respRate(20), c.kyphoscoliosis(), bloodGas({ ph: 7.37, pco2: 6.6, po2: 8.2, hco3: 30 })],
    }),
    expect: [once('repeat-blood-gas-due', 'issue 6 class 12: a card is not repeated (common practice)'), once('news2-scale-2', 'common practice')],
  }),
  scenario({
    id: 'oxygen-with-other-draft',
    story: 'Pneumonia: oxygen 2 L/min signed with a diet order; only the oxygen order is checked',
    pov: 'pharmacist', topic: 'class 12: two drafts', age: 58, benign: true,
    build: () => {
      const diet: FhirResource = {
        resourceType: 'NutritionOrder', id: 'lbgh-diet-01', status: 'draft', intent: 'order',
        patient: { reference: 'Patient/lbgh-scn-0001' }, dateTime: ago(5),
      };
      return {
        drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%'), diet],
        record: [spo2(96), respRate(18), c.pneumonia()],
      };
    },
    expect: [silent('duplicate-oxygen-order', SRC.common)],
  }),
  scenario({
    id: 'client-adds-pill-dose',
    story: 'The EHR adds a dose of "1 {pill}" to every medication order, oxygen included',
    pov: 'pharmacist', topic: 'class 12: needless cards', age: 64, benign: true,
    build: () => {
      const order = medicationOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%', { method: 'Nasal cannula' });
      const dosage = { text: 'Oxygen 2 L/min via nasal cannula, target SpO2 94-98%', method: { text: 'Nasal cannula' }, doseAndRate: [{ doseQuantity: { value: 1, unit: 'pill', system: 'http://unitsofmeasure.org', code: '{pill}' } }] };
      return { drafts: [{ ...order, dosageInstruction: [dosage] }], record: [spo2(96), respRate(18), c.pneumonia()] };
    },
    expect: [silent('data-set-aside', 'issue 6 class 12: fields the service does not need raise no card (common practice)')],
  }),
  scenario({
    id: 'optional-prefetch-missing',
    story: 'The encounter could not be fetched; nothing the checks need is missing',
    pov: 'respiratory therapist', topic: 'class 12: needless cards', age: 57, benign: true,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(96), respRate(18), c.pneumonia()],
      missing: ['encounter'],
    }),
    expect: [silent('required-data-unavailable', 'issue 6 class 12: "partial" only when a missing input could change a finding (common practice)')],
  }),

  // --- class 12: cards a clinician can act on ---------------------------------------------------
  scenario({
    id: 'card-bleomycin-is-not-a-poison',
    story: 'Bleomycin lung injury with 94-98 % ordered: the card speaks of a chemotherapy drug, not a poisoning',
    pov: 'pharmacist', topic: 'class 12: wording', age: 37,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(96), respRate(16), c.bleomycin()],
    }),
    expect: [
      fires('oxygen-toxicity-target', 'warning', `${SRC.btsT3} (V2)`),
      neverSays(/poison/i, 'issue 6 class 12: bleomycin is a chemotherapy drug (BNF, from memory)'),
    ],
  }),
  scenario({
    id: 'card-times-read-as-local',
    story: 'Kyphoscoliosis with PaCO2 6.9 kPa and 94-98 % ordered: times on the card read as "40 min ago", not ISO',
    pov: 'ward doctor', topic: 'class 12: wording', age: 66,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(94), respRate(20), c.kyphoscoliosis(), bloodGas({ ph: 7.37, pco2: 6.9, po2: 8.6, hco3: 30 })],
    }),
    expect: [
      fires('target-above-hypercapnic-range', 'critical', `${SRC.btsT4}; ${SRC.btsHypercapnia}`),
      neverSays(/\d{4}-\d{2}-\d{2}T\d{2}:\d{2}/, 'issue 6 class 12: local time or "20 min ago" (policy site.timeZone), common practice'),
    ],
  }),
  scenario({
    id: 'card-detail-fits-side-panel',
    story: 'COPD with hypercapnic acidosis on 28 % Venturi: every card short enough to act on in a side panel',
    pov: 'respiratory therapist', topic: 'class 12: wording', age: 69,
    build: () => ({
      drafts: [serviceOrder('Venturi 28% at 4 L/min, target SpO2 88-92%')],
      record: [spo2(88), respRate(26), c.copd(), bloodGas({ ph: 7.31, pco2: 8.0, po2: 7.5, hco3: 30 })],
    }),
    expect: [
      fires('acute-hypercapnic-acidosis', 'critical', SRC.btsIcs),
      shortDetail(20, 'issue 6 class 12: about a dozen lines, the workings behind the link (common practice)'),
    ],
  }),

  // --- the TSANZ 2015 preset ---------------------------------------------------------------------
  scenario({
    id: 'tsanz-standard-range-at-target',
    story: 'TSANZ site: pneumonia on 2 L/min with 92-96 %, SpO2 94 %',
    pov: 'ward doctor', topic: 'classic: TSANZ', age: 55, benign: true, policy: 'tsanz-2015',
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 92-96%')],
      record: [spo2(94), respRate(18), c.pneumonia()],
    }),
    expect: [silent('target-differs-from-policy', SRC.tsanz)],
  }),
  scenario({
    id: 'tsanz-copd-at-target',
    story: 'TSANZ site: COPD on 1 L/min with 88-92 %, SpO2 90 %',
    pov: 'pharmacist', topic: 'classic: TSANZ', age: 71, benign: true, policy: 'tsanz-2015',
    build: () => ({
      drafts: [serviceOrder('Oxygen 1 L/min via nasal cannula, target SpO2 88-92%')],
      record: [spo2(90), respRate(18), c.copd()],
    }),
    expect: [silent('target-above-hypercapnic-range', SRC.tsanz)],
  }),
  scenario({
    id: 'tsanz-bts-range-ordered',
    story: 'TSANZ site: pneumonia with 94-98 % ordered (the BTS range)',
    pov: 'respiratory therapist', topic: 'classic: TSANZ', age: 60, policy: 'tsanz-2015',
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(95), respRate(18), c.pneumonia()],
    }),
    expect: [fires('target-differs-from-policy', 'info', SRC.tsanz)],
  }),
  scenario({
    id: 'tsanz-above-upper-bound',
    story: 'TSANZ site: pneumonia on 3 L/min, SpO2 98 % against 92-96 %',
    pov: 'ward doctor', topic: 'classic: TSANZ', age: 66, policy: 'tsanz-2015',
    build: () => ({
      drafts: [serviceOrder('Oxygen 3 L/min via nasal cannula, target SpO2 92-96%')],
      record: [...spo2OnFlow(98, 3), respRate(16), c.pneumonia()],
    }),
    expect: [fires('spo2-above-target', 'info', `${SRC.tsanz}; BMJ 2018 (SpO2 <= 96 %)`)],
  }),
];
