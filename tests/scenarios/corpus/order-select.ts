import * as c from '../support/clinical.js';
import { SRC } from '../support/clinical.js';
import { bloodGas, deviceOrder, medicationOrder, respRate, serviceOrder, spo2 } from '../support/fhir.js';
import { fires, noLessOxygen, scenario, silent, type Scenario } from '../support/scenario.js';

/**
 * Order-select calls: the prescriber or pharmacist has picked an order and not yet signed it. Only
 * the rules registered for order-select answer, so titration against a reading waits for order-sign.
 */

const topic = 'order-select';
const hook = 'order-select';

export const ORDER_SELECT: readonly Scenario[] = [
  scenario({
    id: 'select-copd-standard-target',
    story: 'Pharmacist selects a 94-98 % nasal cannula order for a patient with COPD and no gas',
    pov: 'pharmacist', topic, hook, age: 76,
    build: () => ({
      drafts: [medicationOrder('Oxygen 2 L/min nasal cannula, target SpO2 94-98%', { method: 'Nasal cannula', flowLPerMin: 2 })],
      record: [spo2(94), respRate(20), c.copd()],
    }),
    expect: [fires('target-above-hypercapnic-range', 'warning', SRC.btsT4)],
  }),
  scenario({
    id: 'select-copd-hypercapnic-standard-target',
    story: 'Pharmacist selects a 94-98 % order for COPD with PaCO2 7.5 kPa',
    pov: 'pharmacist', topic, hook, age: 71,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(94), respRate(22), c.copd(), bloodGas({ ph: 7.37, pco2: 7.5, po2: 8.9, hco3: 32 })],
    }),
    expect: [fires('target-above-hypercapnic-range', 'critical', `${SRC.btsT4}; ${SRC.btsHypercapnia}`)],
  }),
  scenario({
    id: 'select-venturi-tachypnoea',
    story: 'Respiratory therapist selects a 40 % Venturi at 10 L/min for a patient breathing at 34/min',
    pov: 'respiratory therapist', topic, hook, age: 63,
    build: () => ({
      drafts: [deviceOrder('Venturi mask', { flowLPerMin: 10, fio2Percent: 40, note: 'Target SpO2 94-98%' })],
      record: [spo2(94), respRate(34), c.pneumonia()],
    }),
    expect: [fires('venturi-flow-insufficient', 'warning', SRC.venturiRr), noLessOxygen(SRC.venturiRr)],
  }),
  scenario({
    id: 'select-carbon-monoxide-with-target',
    story: 'Pharmacist selects a reservoir mask order with a 94-98 % target for carbon monoxide poisoning',
    pov: 'pharmacist', topic, hook, age: 39,
    build: () => ({
      drafts: [medicationOrder('Oxygen 15 L/min via reservoir mask, target SpO2 94-98%', { method: 'Reservoir mask', flowLPerMin: 15 })],
      record: [spo2(99), respRate(20), c.carbonMonoxide()],
    }),
    expect: [fires('carbon-monoxide-oximetry', 'critical', SRC.btsT1), noLessOxygen(SRC.btsT1)],
  }),
  scenario({
    id: 'select-cannula-too-high',
    story: 'Pharmacist selects nasal cannula at 10 L/min',
    pov: 'pharmacist', topic, hook, age: 58,
    build: () => ({
      drafts: [medicationOrder('Oxygen 10 L/min nasal cannula, target SpO2 94-98%', { method: 'Nasal cannula', flowLPerMin: 10 })],
      record: [spo2(93), respRate(24), c.pneumonia()],
    }),
    expect: [fires('flow-outside-device-range', 'warning', SRC.cannula)],
  }),
  scenario({
    id: 'select-paraquat-standard-target',
    story: 'Pharmacist selects a 94-98 % oxygen order for paraquat poisoning',
    pov: 'pharmacist', topic, hook, age: 35,
    build: () => ({
      drafts: [medicationOrder('Oxygen 2 L/min nasal cannula, target SpO2 94-98%', { method: 'Nasal cannula', flowLPerMin: 2 })],
      record: [spo2(97), respRate(18), c.paraquat()],
    }),
    expect: [fires('oxygen-toxicity-target', 'warning', `${SRC.btsT3} (V2)`)],
  }),
  scenario({
    id: 'select-child-9',
    story: 'Pharmacist selects an oxygen order for a child of 9: adult checks do not apply',
    pov: 'pharmacist', topic, hook, age: 9,
    build: () => ({
      drafts: [medicationOrder('Oxygen 1 L/min nasal cannula, target SpO2 94-98%', { method: 'Nasal cannula', flowLPerMin: 1 })],
      record: [spo2(95), respRate(24), c.pneumonia()],
    }),
    expect: [fires('adult-checks-only', 'info', SRC.btsScope), silent('target-range-missing', SRC.btsScope)],
  }),
  scenario({
    id: 'select-one-sided-target',
    story: 'Pharmacist selects an order reading "keep SpO2 > 92%"',
    pov: 'pharmacist', topic, hook, age: 60,
    build: () => ({
      drafts: [medicationOrder('Oxygen 2 L/min nasal cannula, keep SpO2 > 92%', { method: 'Nasal cannula', flowLPerMin: 2 })],
      record: [spo2(95), respRate(18), c.pneumonia()],
    }),
    expect: [fires('target-one-sided', 'warning', SRC.btsRange), silent('target-range-missing', SRC.btsRange)],
  }),
  scenario({
    id: 'select-benign-bronchiectasis',
    story: 'Pharmacist selects 1 L/min nasal cannula with 88-92 % for bronchiectasis',
    pov: 'pharmacist', topic, hook, age: 67, benign: true,
    build: () => ({
      drafts: [medicationOrder('Oxygen 1 L/min nasal cannula, target SpO2 88-92%', { method: 'Nasal cannula', flowLPerMin: 1 })],
      record: [spo2(90), respRate(18), c.bronchiectasis()],
    }),
    expect: [silent('target-above-hypercapnic-range', SRC.btsT4)],
  }),
  scenario({
    id: 'select-benign-venturi-28',
    story: 'Pharmacist selects 28 % Venturi at 4 L/min with 88-92 % for COPD',
    pov: 'pharmacist', topic, hook, age: 70, benign: true,
    build: () => ({
      drafts: [medicationOrder('Venturi 28% 4 L/min, target SpO2 88-92%', { method: 'Venturi mask 28%', flowLPerMin: 4 })],
      record: [spo2(90), respRate(20), c.copd()],
    }),
    expect: [silent('venturi-flow-insufficient', SRC.venturiMin)],
  }),
  scenario({
    id: 'select-benign-post-op',
    story: 'Pharmacist selects 2 L/min nasal cannula with 94-98 % after surgery',
    pov: 'pharmacist', topic, hook, age: 48, benign: true,
    build: () => ({
      drafts: [medicationOrder('Oxygen 2 L/min nasal cannula, target SpO2 94-98%', { method: 'Nasal cannula', flowLPerMin: 2 })],
      record: [spo2(97), respRate(16), c.postOp()],
    }),
    expect: [silent('target-range-missing', SRC.btsRange)],
  }),
];
