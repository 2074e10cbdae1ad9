import * as c from '../support/clinical.js';
import { SRC } from '../support/clinical.js';
import {
  bloodGas,
  bmi,
  deviceOrder,
  haemoglobin,
  medicationOrder,
  o2Flow,
  respRate,
  serviceOrder,
  spo2,
  spo2OnFlow,
} from '../support/fhir.js';
import { scenario, silent, type Scenario } from '../support/scenario.js';

/**
 * Orders a respiratory consultant signs as they are: the right range for the patient, SpO2 within
 * it, a device and flow within their published range. Each must raise no warning or critical card
 * (`benign: true` adds that expectation). Alert fatigue is a harm.
 */

const topic = 'benign';

export const BENIGN: readonly Scenario[] = [
  scenario({
    id: 'benign-copd-venturi-24-at-target',
    story: 'COPD exacerbation on 24 % Venturi at 2 L/min, 88-92 % ordered, SpO2 90 %',
    pov: 'ward doctor', topic, benign: true, age: 71,
    build: () => ({
      drafts: [serviceOrder('Oxygen via Venturi 24% at 2 L/min, target SpO2 88-92%')],
      record: [spo2(90), respRate(18), c.copd()],
    }),
    expect: [silent('target-above-hypercapnic-range', SRC.btsT4), silent('spo2-above-target', SRC.btsT4)],
  }),
  scenario({
    id: 'benign-post-op-cannula-2l',
    story: 'Day 1 after cholecystectomy on 2 L/min nasal cannula, 94-98 % ordered, SpO2 96 %',
    pov: 'ward doctor', topic, benign: true, age: 58,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(96), respRate(16), c.postOp()],
    }),
    expect: [silent('target-range-missing', SRC.btsRange), silent('high-oxygen-requirement', SRC.fio2Envelope)],
  }),
  scenario({
    id: 'benign-pneumonia-medication-request-3l',
    story: 'Pneumonia, oxygen prescribed as a medicine: nasal cannula 3 L/min coded, 94-98 %, SpO2 95 %',
    pov: 'pharmacist', topic, benign: true, age: 64,
    build: () => ({
      drafts: [medicationOrder('Oxygen 3 L/min via nasal cannula, target SpO2 94-98%', { method: 'Nasal cannula', flowLPerMin: 3 })],
      record: [spo2(95), respRate(20), c.pneumonia()],
    }),
    expect: [silent('flow-outside-device-range', SRC.cannula)],
  }),
  scenario({
    id: 'benign-pneumonia-device-request-1l',
    story: 'Pneumonia improving, nasal cannula 1 L/min as a DeviceRequest, 94-98 % in the note, SpO2 94 %',
    pov: 'respiratory therapist', topic, benign: true, age: 49,
    build: () => ({
      drafts: [deviceOrder('Nasal cannula', { flowLPerMin: 1, note: 'Target SpO2 94-98%' })],
      record: [spo2(94), respRate(17), c.pneumonia()],
    }),
    expect: [silent('spo2-below-target', SRC.btsTables)],
  }),
  scenario({
    id: 'benign-heart-failure-face-mask-5l',
    story: 'Pulmonary oedema settling on a simple face mask at 5 L/min, 94-98 %, SpO2 96 %, RR 18',
    pov: 'ward doctor', topic, benign: true, age: 77,
    build: () => ({
      drafts: [serviceOrder('Oxygen 5 L/min via simple face mask, target SpO2 94-98%')],
      record: [spo2(96), respRate(18), c.heartFailure()],
    }),
    expect: [silent('flow-outside-device-range', SRC.jensen)],
  }),
  scenario({
    id: 'benign-copd-venturi-28-at-target',
    story: 'COPD on 28 % Venturi at 4 L/min, 88-92 %, SpO2 89 %, RR 22',
    pov: 'respiratory therapist', topic, benign: true, age: 68,
    build: () => ({
      drafts: [serviceOrder('Venturi 28% at 4 L/min, target SpO2 88-92%')],
      record: [spo2(89), respRate(22), c.copdIcd()],
    }),
    expect: [silent('venturi-flow-insufficient', SRC.venturiMin)],
  }),
  scenario({
    id: 'benign-bronchiectasis-cannula-1l',
    story: 'Bronchiectasis exacerbation on nasal cannula 1 L/min, 88-92 %, SpO2 91 %',
    pov: 'pharmacist', topic, benign: true, age: 66,
    build: () => ({
      drafts: [medicationOrder('1 L/min nasal cannula, target SpO2 88-92%', { method: 'Nasal cannula', flowLPerMin: 1 })],
      record: [spo2(91), respRate(19), c.bronchiectasis()],
    }),
    expect: [silent('target-above-hypercapnic-range', SRC.btsT4)],
  }),
  scenario({
    id: 'benign-cystic-fibrosis-venturi-28',
    story: 'Adult with cystic fibrosis exacerbation on 28 % Venturi at 4 L/min, 88-92 %, SpO2 90 %',
    pov: 'respiratory therapist', topic, benign: true, age: 27,
    build: () => ({
      drafts: [serviceOrder('Oxygen via 28% Venturi mask, 4 L/min, target SpO2 88-92%')],
      record: [spo2(90), respRate(20), c.cysticFibrosis()],
    }),
    expect: [silent('lower-range-without-risk', SRC.btsT4)],
  }),
  scenario({
    id: 'benign-motor-neuron-disease-cannula',
    story: 'Motor neuron disease with a chest infection on 1 L/min nasal cannula, 88-92 %, SpO2 92 %',
    pov: 'ward doctor', topic, benign: true, age: 63,
    build: () => ({
      drafts: [serviceOrder('Oxygen 1 L/min via nasal cannula, target SpO2 88-92%')],
      record: [spo2(92), respRate(18), c.motorNeuronDisease()],
    }),
    expect: [silent('spo2-above-target', SRC.btsT4)],
  }),
  scenario({
    id: 'benign-obesity-hypoventilation-venturi-24',
    story: 'Obesity hypoventilation on 24 % Venturi at 2 L/min, 88-92 %, SpO2 88 %',
    pov: 'respiratory therapist', topic, benign: true, age: 55,
    build: () => ({
      drafts: [serviceOrder('Venturi 24% 2 L/min, target SpO2 88-92%')],
      record: [spo2(88), respRate(18), c.obesityHypoventilation()],
    }),
    expect: [silent('spo2-below-target', SRC.btsT4)],
  }),
  scenario({
    id: 'benign-kyphoscoliosis-no-gas-cannula',
    story: 'Kyphoscoliosis, no gas yet, nasal cannula 1 L/min with 88-92 %, SpO2 90 %',
    pov: 'ward doctor', topic, benign: true, age: 59,
    build: () => ({
      drafts: [serviceOrder('Nasal cannula 1 L/min, target SpO2 88-92%')],
      record: [spo2(90), respRate(17), c.kyphoscoliosis()],
    }),
    expect: [silent('target-above-hypercapnic-range', SRC.btsT4)],
  }),
  scenario({
    id: 'benign-morbid-obesity-cannula',
    story: 'Morbid obesity (BMI 46) after surgery, nasal cannula 2 L/min, 88-92 %, SpO2 91 %',
    pov: 'pharmacist', topic, benign: true, age: 52,
    build: () => ({
      drafts: [medicationOrder('Oxygen 2 L/min nasal cannula, target SpO2 88-92%', { method: 'Nasal cannula', flowLPerMin: 2 })],
      record: [spo2(91), respRate(16), bmi(46), c.morbidObesity()],
    }),
    expect: [silent('lower-range-without-risk', SRC.btsT4)],
  }),
  scenario({
    id: 'benign-pulmonary-embolism-cannula',
    story: 'Pulmonary embolism on 2 L/min nasal cannula, 94-98 %, SpO2 95 %',
    pov: 'ward doctor', topic, benign: true, age: 44,
    build: () => ({
      drafts: [serviceOrder('O2 2L NC, target SpO2 94-98%')],
      record: [spo2(95), respRate(20), c.pulmonaryEmbolism()],
    }),
    expect: [silent('spo2-below-target', SRC.btsTables)],
  }),
  scenario({
    id: 'benign-sepsis-cannula-3l',
    story: 'Urinary sepsis on 3 L/min nasal cannula, 94-98 %, SpO2 97 %',
    pov: 'pharmacist', topic, benign: true, age: 81,
    build: () => ({
      drafts: [medicationOrder('Oxygen via nasal cannula at 3 L/min; target SpO2 94-98%', { method: 'Nasal cannula', flowLPerMin: 3 })],
      record: [spo2(97), respRate(21), c.sepsis()],
    }),
    expect: [silent('spo2-above-target', SRC.btsTables)],
  }),
  scenario({
    id: 'benign-structured-target-extension',
    story: 'Pneumonia, nasal cannula 2 L/min with the target in the coded extension (94-98 %), SpO2 96 %',
    pov: 'pharmacist', topic, benign: true, age: 70,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula', { target: [94, 98] })],
      record: [spo2(96), respRate(18), c.pneumonia()],
    }),
    expect: [silent('target-range-missing', SRC.btsRange)],
  }),
  scenario({
    id: 'benign-elderly-cannula-1l',
    story: 'Frail 92-year-old with pneumonia on 1 L/min nasal cannula, 94-98 %, SpO2 95 %',
    pov: 'ward doctor', topic, benign: true, age: 92,
    build: () => ({
      drafts: [serviceOrder('Oxygen 1 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(95), respRate(18), c.pneumonia()],
    }),
    expect: [silent('lower-range-without-risk', SRC.btsTables)],
  }),
  scenario({
    id: 'benign-asthma-hyperventilating-normal-gas',
    story: 'Moderate asthma, gas shows low PaCO2 4.1 kPa, nasal cannula 2 L/min, 94-98 %, SpO2 96 %',
    pov: 'respiratory therapist', topic, benign: true, age: 19,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(96), respRate(24), c.acuteAsthma(), bloodGas({ ph: 7.46, pco2: 4.1, po2: 11.2, hco3: 23 })],
    }),
    expect: [silent('acute-hypercapnic-acidosis', SRC.btsIcs), silent('hypercapnia-without-chronic-retention', SRC.asthma)],
  }),
  scenario({
    id: 'benign-copd-previous-niv-venturi-24',
    story: 'COPD with previous NIV, compensated gas, 24 % Venturi at 2 L/min, 88-92 %, SpO2 89 %',
    pov: 'respiratory therapist', topic, benign: true, age: 73,
    build: () => ({
      drafts: [serviceOrder('Venturi 24% at 2 L/min, target SpO2 88-92%')],
      record: [spo2(89), respRate(20), c.copd(), c.previousNiv(), bloodGas({ ph: 7.37, pco2: 6.8, po2: 7.9, hco3: 31 })],
    }),
    expect: [silent('lower-range-without-risk', SRC.btsTables), silent('acute-hypercapnic-acidosis', SRC.compensated)],
  }),
  scenario({
    id: 'benign-myasthenia-cannula',
    story: 'Myasthenia gravis, stable, nasal cannula 1 L/min, 88-92 %, SpO2 91 %',
    pov: 'pharmacist', topic, benign: true, age: 48,
    build: () => ({
      drafts: [medicationOrder('Nasal cannula 1 L/min, SpO2 88-92%', { method: 'Nasal cannula', flowLPerMin: 1 })],
      record: [spo2(91), respRate(16), c.myasthenia()],
    }),
    expect: [silent('target-above-hypercapnic-range', SRC.btsT4)],
  }),
  scenario({
    id: 'benign-spo2-at-lower-bound-94',
    story: 'Pneumonia, SpO2 exactly 94 % on 2 L/min with 94-98 % ordered (the bound is in range)',
    pov: 'ward doctor', topic, benign: true, age: 60,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnFlow(94, 2), respRate(18), c.pneumonia()],
    }),
    expect: [silent('spo2-below-target', SRC.btsTables)],
  }),
  scenario({
    id: 'benign-spo2-at-upper-bound-98',
    story: 'Sepsis, SpO2 exactly 98 % on 1 L/min with 94-98 % ordered',
    pov: 'respiratory therapist', topic, benign: true, age: 66,
    build: () => ({
      drafts: [serviceOrder('Oxygen 1 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnFlow(98, 1), respRate(18), c.sepsis()],
    }),
    expect: [silent('spo2-above-target', SRC.btsTables)],
  }),
  scenario({
    id: 'benign-copd-spo2-at-88',
    story: 'COPD, SpO2 exactly 88 % on 24 % Venturi with 88-92 % ordered',
    pov: 'pharmacist', topic, benign: true, age: 74,
    build: () => ({
      drafts: [serviceOrder('Venturi 24% at 2 L/min, target SpO2 88-92%')],
      record: [spo2(88), respRate(19), c.copd()],
    }),
    expect: [silent('spo2-below-target', SRC.btsT4)],
  }),
  scenario({
    id: 'benign-copd-spo2-at-92',
    story: 'COPD, SpO2 exactly 92 % on 1 L/min nasal cannula with 88-92 % ordered',
    pov: 'ward doctor', topic, benign: true, age: 69,
    build: () => ({
      drafts: [serviceOrder('Oxygen 1 L/min nasal cannula, target SpO2 88-92%')],
      record: [...spo2OnFlow(92, 1), respRate(18), c.copd()],
    }),
    expect: [silent('spo2-above-target', SRC.btsT4)],
  }),
  scenario({
    id: 'benign-venturi-35-pneumonia',
    story: 'Pneumonia on 35 % Venturi at 8 L/min, 94-98 %, SpO2 95 %, RR 24',
    pov: 'respiratory therapist', topic, benign: true, age: 57,
    build: () => ({
      drafts: [serviceOrder('Venturi 35% at 8 L/min, target SpO2 94-98%')],
      record: [spo2(95), respRate(24), c.pneumonia()],
    }),
    expect: [silent('venturi-flow-insufficient', SRC.venturiMin)],
  }),
  scenario({
    id: 'benign-copd-venturi-24-at-3l',
    story: 'COPD on 24 % Venturi at 3 L/min (within BTS 2-3 L/min), 88-92 %, SpO2 91 %',
    pov: 'pharmacist', topic, benign: true, age: 80,
    build: () => ({
      drafts: [medicationOrder('Venturi 24% at 3 L/min, target SpO2 88-92%', { method: 'Venturi mask 24%', flowLPerMin: 3 })],
      record: [spo2(91), respRate(20), c.copd()],
    }),
    expect: [silent('venturi-flow-insufficient', SRC.venturiMin)],
  }),
  scenario({
    id: 'benign-recorded-flow-matches-order',
    story: 'Pneumonia: the chart shows 2 L/min running with SpO2 96 %, the re-written order is the same',
    pov: 'ward doctor', topic, benign: true, age: 62,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnFlow(96, 2, 30), respRate(18), c.pneumonia()],
    }),
    expect: [silent('spo2-above-target', SRC.btsTables)],
  }),
  scenario({
    id: 'benign-order-select-cannula',
    story: 'Doctor picks a nasal cannula 2 L/min order with 94-98 % for a patient with pneumonia (order-select)',
    pov: 'ward doctor', topic, benign: true, age: 45, hook: 'order-select',
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(95), respRate(18), c.pneumonia()],
    }),
    expect: [silent('target-range-missing', SRC.btsRange)],
  }),
  scenario({
    id: 'benign-order-select-copd-venturi',
    story: 'Pharmacist verifies a 24 % Venturi order with 88-92 % for COPD at order-select',
    pov: 'pharmacist', topic, benign: true, age: 76, hook: 'order-select',
    build: () => ({
      drafts: [medicationOrder('Venturi 24% 2 L/min, target SpO2 88-92%', { method: 'Venturi mask 24%', flowLPerMin: 2 })],
      record: [spo2(90), respRate(18), c.copd()],
    }),
    expect: [silent('target-above-hypercapnic-range', SRC.btsT4)],
  }),
  scenario({
    id: 'benign-anaemia-cannula-hb',
    story: 'Pneumonia with anaemia (Hb 9.1 g/dL), nasal cannula 2 L/min, 94-98 %, SpO2 96 %',
    pov: 'ward doctor', topic, benign: true, age: 67,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(96), respRate(18), haemoglobin(9.1), c.pneumonia()],
    }),
    expect: [silent('spo2-below-target', SRC.btsTables)],
  }),
  scenario({
    id: 'benign-normal-gas-no-risk',
    story: 'Pneumonia with a normal arterial gas, nasal cannula 2 L/min, 94-98 %, SpO2 95 %',
    pov: 'respiratory therapist', topic, benign: true, age: 53,
    build: () => ({
      drafts: [serviceOrder('Nasal cannula 2 L/min, target SpO2 94-98%')],
      record: [spo2(95), respRate(19), c.pneumonia(), bloodGas({ ph: 7.41, pco2: 5.1, po2: 9.8, hco3: 24 })],
    }),
    expect: [silent('acute-hypercapnic-acidosis', SRC.btsIcs), silent('repeat-blood-gas-due', SRC.btsTables)],
  }),
  scenario({
    id: 'benign-gas-in-mmhg-no-risk',
    story: 'Post-op patient with a normal gas reported in mmHg, nasal cannula 2 L/min, 94-98 %, SpO2 97 %',
    pov: 'pharmacist', topic, benign: true, age: 47,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(97), respRate(15), c.postOp(), bloodGas({ ph: 7.4, pco2: 39, po2: 82, hco3: 24, unit: 'mm[Hg]' })],
    }),
    expect: [silent('acute-hypercapnic-acidosis', SRC.btsIcs)],
  }),
  scenario({
    id: 'benign-copd-flow-recorded-venturi',
    story: 'COPD: chart shows 28 % Venturi at 4 L/min with SpO2 90 %, order re-signed unchanged',
    pov: 'respiratory therapist', topic, benign: true, age: 70,
    build: () => ({
      drafts: [serviceOrder('Venturi 28% at 4 L/min, target SpO2 88-92%')],
      record: [spo2(90, 25), o2Flow(4, 25), respRate(21), c.copd()],
    }),
    expect: [silent('spo2-above-target', SRC.btsT4)],
  }),
  scenario({
    id: 'benign-young-adult-cannula',
    story: 'Young adult with pneumonia on 2 L/min nasal cannula, 94-98 %, SpO2 97 %',
    pov: 'ward doctor', topic, benign: true, age: 23,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 litres per minute via nasal cannulae, target SpO2 94-98%')],
      record: [spo2(97), respRate(18), c.pneumonia()],
    }),
    expect: [silent('target-range-missing', SRC.btsRange)],
  }),
  scenario({
    id: 'benign-device-request-venturi-fio2',
    story: 'Respiratory therapist documents a 28 % Venturi as a DeviceRequest (FiO2 and flow coded) for COPD, SpO2 89 %',
    pov: 'respiratory therapist', topic, benign: true, age: 72,
    build: () => ({
      drafts: [deviceOrder('Venturi mask', { flowLPerMin: 4, fio2Percent: 28, note: 'Target SpO2 88-92%' })],
      record: [spo2(89), respRate(20), c.copd()],
    }),
    expect: [silent('venturi-flow-insufficient', SRC.venturiMin)],
  }),
];
