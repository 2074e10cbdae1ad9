import * as c from '../support/clinical.js';
import { SRC } from '../support/clinical.js';
import { bloodGas, deviceOrder, fio2Percent, medicationOrder, onRecord, serviceOrder, spo2, spo2OnFlow } from '../support/fhir.js';
import {
  fires,
  neverSays,
  noLessOxygen,
  noMoreOxygen,
  says,
  scenario,
  silent,
  suggestionsKeep,
  suggestionsLose,
  type Scenario,
} from '../support/scenario.js';

/**
 * The titration review on patient-view, by class of situation a respiratory consultant would sign
 * (or refuse) cards for: over-oxygenation with and without hypercapnic risk, a falling patient, high
 * flow, comfort care, sparse readings, a child, carbon monoxide, the oximetry caution and a
 * hypercapnic acidosis. Readings are minutes before NOW; look-back 8 h, a reading holds at most 2 h
 * (titrationReview.*, local choices).
 */

const topic = 'patient-view titration classes';
const DAY = 24 * 60;
const hours = (...h: number[]): number[] => h.map((x) => x * 60);
const onFlow = (lPerMin: number, values: readonly number[], ages: readonly number[]) =>
  values.flatMap((percent, i) => spo2OnFlow(percent, lPerMin, ages[i] ?? 0));
const onFio2 = (fio2: number, values: readonly number[], ages: readonly number[]) =>
  values.flatMap((percent, i) => [spo2(percent, ages[i] ?? 0), fio2Percent(fio2, ages[i] ?? 0)]);
const RESERVOIR_WEAN =
  'BTS 2017 (from memory of its weaning section): from a reservoir mask step to nasal cannulae 2-6 L/min or a simple mask 5-10 L/min, never straight to air';
const STOP_ON_AIR = 'BTS 2017 (from memory): after stopping oxygen, check SpO2 on air at 5 min and again at 1 h';

export const PATIENT_VIEW_CLASSES: readonly Scenario[] = [
  scenario({
    id: 'pv-class-copd-95-97-on-2l-for-hours',
    story: 'COPD, 88-92 % ordered, 2 L/min nasal cannulae, SpO2 95-97 % hourly for 7 h',
    pov: 'ward doctor', topic, hook: 'patient-view', age: 71,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 2 L/min via nasal cannulae. Target SpO2 88-92%'), 2 * DAY),
        c.copd(),
        onFlow(2, [96, 97, 95, 96, 97, 96, 95, 96], hours(7, 6, 5, 4, 3, 2, 1, 0.2)),
      ],
    }),
    expect: [
      fires('time-above-target-on-oxygen', 'warning', `${SRC.btsT4}; Echevarria 2021: SpO2 > 92 % and COPD mortality`),
      says('time-above-target-on-oxygen', /88–92 %/, SRC.btsT4),
      says('time-above-target-on-oxygen', /lower/i, 'BTS 2017, Table 4: above the 88-92 % range, lower the oxygen'),
      silent('ready-to-step-down', 'common practice: one card offers the step, not two'),
      noMoreOxygen(SRC.btsT4),
    ],
  }),
  scenario({
    id: 'pv-class-reservoir-15l-hyperoxaemic',
    story: 'Pneumonia, 94-98 % ordered, 15 L/min reservoir mask since admission, SpO2 99-100 % for 6 h',
    pov: 'respiratory therapist', topic, hook: 'patient-view', age: 62,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 15 L/min via non-rebreathe reservoir mask. Target SpO2 94-98%'), DAY),
        c.pneumonia(),
        onFlow(15, [100, 99, 100, 100, 99, 100], hours(5, 4, 3, 2, 1, 0.2)),
      ],
    }),
    expect: [
      fires('time-above-target-on-oxygen', 'info', 'BTS 2017: lower the oxygen above the target range; BMJ 2018: SpO2 <= 96 %'),
      says('time-above-target-on-oxygen', /nasal cannulae at 2[–-]6 L\/min or a simple face mask at 5[–-]10 L\/min/, RESERVOIR_WEAN),
      neverSays(/stop(ping)? the oxygen/i, RESERVOIR_WEAN),
      suggestionsKeep('Target SpO2 94-98%', SRC.cdsOnly),
    ],
  }),
  scenario({
    id: 'pv-class-falling-96-to-90-flow-rising',
    story: 'Pneumonia, 94-98 %: SpO2 96 % at the start of the shift, 90 % now, flow raised 2 → 4 → 6 L/min',
    pov: 'ward doctor', topic, hook: 'patient-view', age: 68,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 2-6 L/min via nasal cannulae. Target SpO2 94-98%'), DAY),
        c.pneumonia(),
        onFlow(2, [96, 95], hours(7, 6)),
        onFlow(4, [94, 93], hours(4, 3)),
        onFlow(6, [91, 90], hours(1, 0.2)),
      ],
    }),
    expect: [
      fires('rising-oxygen-need', 'warning', SRC.btsFall),
      fires('time-below-target', 'warning', 'BTS 2017: below the target range, more oxygen within the prescription and review'),
      silent('ready-to-step-down', SRC.btsWean),
      silent('time-above-target-on-oxygen', SRC.btsWean),
      noLessOxygen('BTS 2017, Tables 1-4: below target and a rising need call for review, never less oxygen'),
    ],
  }),
  scenario({
    id: 'pv-class-high-flow-fio2-05-in-range',
    story: 'High-flow nasal oxygen 50 L/min FiO2 0.50, 94-98 %, SpO2 95-97 % for 6 h: weaning is the team\'s',
    pov: 'respiratory therapist', topic, benign: true, hook: 'patient-view', age: 57,
    build: () => ({
      drafts: [],
      record: [
        onRecord(deviceOrder('High flow nasal cannula', { flowLPerMin: 50, fio2Percent: 50, note: 'Target SpO2 94-98%' }), DAY),
        c.pneumonia(),
        onFio2(50, [95, 96, 97, 96, 95, 96], hours(5, 4, 3, 2, 1, 0.2)),
      ],
    }),
    expect: [
      silent('ready-to-step-down', 'common practice: stepping down from high flow is a change of support (device tiers)'),
      silent('time-below-target', 'BTS 2017, Tables 1-3: 95-97 % is within 94-98 %'),
      noLessOxygen('common practice: no one-click step to a lower tier of support'),
    ],
  }),
  scenario({
    id: 'pv-class-high-flow-fio2-05-above-range',
    story: 'High-flow nasal oxygen 50 L/min FiO2 0.50, 94-98 %, SpO2 99-100 % for 6 h: lower the FiO2 at the bedside',
    pov: 'respiratory therapist', topic, hook: 'patient-view', age: 57,
    build: () => ({
      drafts: [],
      record: [
        onRecord(deviceOrder('High flow nasal cannula', { flowLPerMin: 50, fio2Percent: 50, note: 'Target SpO2 94-98%' }), DAY),
        c.pneumonia(),
        onFio2(50, [99, 100, 99, 100, 99, 100], hours(5, 4, 3, 2, 1, 0.2)),
      ],
    }),
    expect: [
      fires('time-above-target-on-oxygen', 'info', 'BTS 2017: lower the oxygen above the target range; BMJ 2018: SpO2 <= 96 %'),
      says('time-above-target-on-oxygen', /lowering the FiO2 first/, 'common practice: on high flow the FiO2 is lowered first, the flow later'),
      noLessOxygen('common practice: no one-click step to a lower tier of support'),
      neverSays(/stop(ping)? the oxygen/i, 'common practice: high flow is weaned, never stopped in one step'),
    ],
  }),
  scenario({
    id: 'pv-class-comfort-care-above-and-below',
    story: 'End-of-life care, comfort oxygen 2 L/min, an 88-92 % range copied into the order, SpO2 85-97 %',
    pov: 'pharmacist', topic, benign: true, hook: 'patient-view', age: 84,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 2 L/min via nasal cannulae for comfort (palliative). Target SpO2 88-92%'), 3 * DAY),
        c.lungCancer(),
        onFlow(2, [97, 96, 85, 86, 96], hours(6, 4, 3, 1, 0.2)),
      ],
    }),
    expect: [
      silent('time-above-target-on-oxygen', SRC.btsPalliative),
      silent('time-below-target', SRC.btsPalliative),
      silent('ready-to-step-down', SRC.btsPalliative),
      silent('blood-gas-overdue', SRC.btsPalliative),
    ],
  }),
  scenario({
    id: 'pv-class-sparse-two-readings-6h-apart',
    story: 'Pneumonia on 2 L/min, 94-98 %: two SpO2 readings in the shift, 96 % six hours ago and 97 % now',
    pov: 'ward doctor', topic, benign: true, hook: 'patient-view', age: 66,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 2 L/min via nasal cannulae. Target SpO2 94-98%'), 2 * DAY),
        c.pneumonia(),
        onFlow(2, [96, 97], hours(6, 0.2)),
      ],
    }),
    expect: [
      fires('ready-to-step-down', 'info', 'common practice: say when the readings are too sparse to judge a stable course'),
      says('ready-to-step-down', /Too few SpO2 readings to tell/, 'common practice: "can\'t tell" is said out loud'),
      noLessOxygen('BTS 2017 (from memory): stop only after two consecutive readings in range, with the patient stable; 2 readings 6 h apart do not show it'),
      silent('time-above-target-on-oxygen', SRC.common),
    ],
  }),
  scenario({
    id: 'pv-class-child-on-2l-above-range',
    story: 'A 7-year-old with bronchiolitis-like illness on 2 L/min, SpO2 99 % for 6 h: the adult review does not apply',
    pov: 'ward doctor', topic, hook: 'patient-view', age: 7,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 2 L/min via nasal cannulae. Target SpO2 94-98%'), DAY),
        onFlow(2, [99, 99, 99, 99, 99, 99], hours(5, 4, 3, 2, 1, 0.2)),
      ],
    }),
    expect: [
      silent('time-above-target-on-oxygen', SRC.btsScope),
      silent('ready-to-step-down', SRC.btsScope),
      silent('time-below-target', SRC.btsScope),
      noLessOxygen(SRC.btsScope),
    ],
  }),
  scenario({
    id: 'pv-class-carbon-monoxide-reservoir-100',
    story: 'Carbon monoxide poisoning on 15 L/min reservoir mask, SpO2 99-100 % for 4 h',
    pov: 'ward doctor', topic, hook: 'patient-view', age: 38,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 15 L/min via non-rebreathe reservoir mask. Target SpO2 94-98%'), 6 * 60),
        c.carbonMonoxide(),
        onFlow(15, [100, 99, 100, 100, 99], hours(4, 3, 2, 1, 0.2)),
      ],
    }),
    expect: [
      silent('time-above-target-on-oxygen', 'BTS 2017, Table 1: carbon monoxide, ignore the oximeter; no SpO2 target'),
      silent('ready-to-step-down', 'BTS 2017, Table 1: carbon monoxide, as much oxygen as possible'),
      noLessOxygen('BTS 2017, Table 1: carbon monoxide, as much oxygen as possible'),
    ],
  }),
  scenario({
    id: 'pv-class-oximetry-caution-on-card',
    story: 'Pneumonia on 3 L/min, 94-98 %, SpO2 95-96 % for 6 h: the step-down card carries the oximetry caution',
    pov: 'ward doctor', topic, benign: true, hook: 'patient-view', age: 52,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 3 L/min via nasal cannulae. Target SpO2 94-98%'), 2 * DAY),
        c.pneumonia(),
        onFlow(3, [95, 96, 95, 96, 95, 96], hours(5, 4, 3, 2, 1, 0.2)),
      ],
    }),
    expect: [
      fires('ready-to-step-down', 'info', SRC.btsWean),
      says('ready-to-step-down', /darker skin/i, 'Sjoding 2020 (NEJM 383:2477): occult hypoxaemia more often with darker skin pigmentation'),
      says('ready-to-step-down', /poor perfusion/i, 'BTS 2017 (from memory): pulse oximetry is unreliable with poor perfusion'),
      says('ready-to-step-down', /[Aa]dvisory only/, 'common practice: decision support advises, the clinician decides'),
    ],
  }),
  scenario({
    id: 'pv-class-hypercapnic-acidosis-above-range',
    story: 'COPD on 28 % Venturi, 88-92 %, SpO2 93-95 % for 5 h; gas 40 min ago pH 7.29, PaCO2 8.1 kPa',
    pov: 'respiratory therapist', topic, hook: 'patient-view', age: 73,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen via Venturi 28% at 4 L/min, target SpO2 88-92%'), DAY),
        c.copd(),
        onFio2(28, [94, 95, 93, 94, 95, 94], hours(5, 4, 3, 2, 1, 0.2)),
        bloodGas({ ph: 7.29, pco2: 8.1, po2: 9.4, hco3: 30, minutesAgo: 40 }),
      ],
    }),
    expect: [
      fires('acute-hypercapnic-acidosis', 'critical', SRC.btsIcs),
      silent('ready-to-step-down', SRC.btsIcs),
      noLessOxygen(`${SRC.btsIcs}; no one-click change while acidotic`),
      neverSays(/(?<!not )stop(ping)? the oxygen/i, 'BTS 2017 (from memory): never stop oxygen abruptly in hypercapnia (rebound hypoxaemia)'),
      says('time-above-target-on-oxygen', /Do not stop the oxygen/, 'BTS 2017 (from memory): never stop oxygen abruptly in hypercapnia (rebound hypoxaemia)'),
      says('time-above-target-on-oxygen', /consider NIV/, SRC.btsIcs),
    ],
  }),
  scenario({
    id: 'pv-class-stop-from-2l-checks-air',
    story: 'Convalescent pneumonia on 2 L/min, 94-98 %, SpO2 95-97 % hourly for 6 h: stop and check SpO2 on air',
    pov: 'respiratory therapist', topic, benign: true, hook: 'patient-view', age: 61,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 2 L/min via nasal cannulae. Target SpO2 94-98%'), 3 * DAY),
        c.pneumonia(),
        onFlow(2, [96, 95, 97, 96, 96, 97], hours(5, 4, 3, 2, 1, 0.2)),
      ],
    }),
    expect: [
      fires('ready-to-step-down', 'info', SRC.btsWean),
      says('ready-to-step-down', /SpO2 on air/, STOP_ON_AIR),
      suggestionsKeep('Target SpO2 94-98%', 'common practice: a stopped order keeps its target range on record'),
      suggestionsKeep('"status":"completed"', 'FHIR R4 ServiceRequest status (from memory): completed, the therapy done'),
      suggestionsKeep('check SpO2 on air', STOP_ON_AIR),
    ],
  }),
  scenario({
    id: 'pv-class-nasal-6l-steps-one-litre',
    story: 'Pneumonia on 6 L/min nasal cannulae, 94-98 %, SpO2 95-97 % for 6 h: one step of flow, not to air',
    pov: 'respiratory therapist', topic, benign: true, hook: 'patient-view', age: 59,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 6 L/min via nasal cannulae. Target SpO2 94-98%'), 2 * DAY),
        c.pneumonia(),
        onFlow(6, [96, 95, 97, 96, 96, 97], hours(5, 4, 3, 2, 1, 0.2)),
      ],
    }),
    expect: [
      fires('ready-to-step-down', 'info', SRC.btsWean),
      says('ready-to-step-down', /Lower the flow to 5 L\/min/, 'common practice: 1 L/min a step (policy thresholds.nasalCannulaStepDownLPerMin)'),
      neverSays(/stop(ping)? the oxygen/i, SRC.btsWean),
      noMoreOxygen(SRC.btsWean),
    ],
  }),
  scenario({
    id: 'pv-class-venturi-35-above-range-next-setting',
    story: 'Pneumonia on 35 % Venturi at 8 L/min, 94-98 %, SpO2 99-100 % for 5 h: the next lower setting, not air',
    pov: 'respiratory therapist', topic, hook: 'patient-view', age: 64,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen via Venturi 35% at 8 L/min, target SpO2 94-98%'), DAY),
        c.pneumonia(),
        onFio2(35, [99, 100, 99, 100, 99, 100], hours(5, 4, 3, 2, 1, 0.2)),
      ],
    }),
    expect: [
      fires('time-above-target-on-oxygen', 'info', 'BTS 2017: lower the oxygen above the target range; BMJ 2018: SpO2 <= 96 %'),
      says('time-above-target-on-oxygen', /next lower Venturi setting, 31 % at 6 L\/min/, SRC.venturiMin),
      neverSays(/(?<!not )stop(ping)? the oxygen/i, 'common practice: a Venturi is stepped down by setting, one at a time'),
    ],
  }),
  scenario({
    id: 'pv-class-cannula-8l-above-range',
    story: 'Nasal cannulae charted at 8 L/min, 94-98 %, SpO2 99 % for 5 h: no step to 7 L/min on a cannula',
    pov: 'respiratory therapist', topic, hook: 'patient-view', age: 70,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 8 L/min via nasal cannulae. Target SpO2 94-98%'), DAY),
        c.pneumonia(),
        onFlow(8, [99, 99, 99, 99, 99, 99], hours(5, 4, 3, 2, 1, 0.2)),
      ],
    }),
    expect: [
      fires('time-above-target-on-oxygen', 'info', 'BTS 2017: lower the oxygen above the target range'),
      neverSays(/Lower the flow to 7 L\/min/, SRC.cannula),
      says('time-above-target-on-oxygen', /1–6 L\/min/, SRC.cannula),
    ],
  }),
  scenario({
    id: 'pv-class-pharmacist-medication-request-lower-flow',
    story: 'MedicationRequest 3 L/min nasal cannula, 94-98 %, SpO2 95-96 % for 6 h: the lowered order stays a valid prescription',
    pov: 'pharmacist', topic, benign: true, hook: 'patient-view', age: 67,
    build: () => ({
      drafts: [],
      record: [
        onRecord(medicationOrder('Oxygen 3 L/min via nasal cannula, target SpO2 94-98%', { method: 'nasal cannula', flowLPerMin: 3 }), 2 * DAY),
        c.pneumonia(),
        onFlow(3, [95, 96, 95, 96, 95, 96], hours(5, 4, 3, 2, 1, 0.2)),
      ],
    }),
    expect: [
      fires('ready-to-step-down', 'info', SRC.btsWean),
      suggestionsKeep('target SpO2 94-98%', `${SRC.btsRange}; the range stays on the lowered order`),
      suggestionsKeep('"status":"active"', 'common practice: a lowered flow is the same running prescription'),
      suggestionsKeep('"method":{"text":"nasal cannula"}', SRC.cdsOnly),
      suggestionsLose('3 L/min', 'common practice: no stale flow left in the words of a changed order'),
      noMoreOxygen(SRC.btsWean),
    ],
  }),
  scenario({
    id: 'pv-class-hypercapnic-acidosis-in-range',
    story: 'COPD on 28 % Venturi, 88-92 %, SpO2 89-91 % for 5 h; gas 40 min ago pH 7.30, PaCO2 7.9 kPa: the acidosis is said on opening the record',
    pov: 'ward doctor', topic, hook: 'patient-view', age: 76,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen via Venturi 28% at 4 L/min, target SpO2 88-92%'), DAY),
        c.copd(),
        onFio2(28, [90, 89, 91, 90, 90, 91], hours(5, 4, 3, 2, 1, 0.2)),
        bloodGas({ ph: 7.3, pco2: 7.9, po2: 8.1, hco3: 31, minutesAgo: 40 }),
      ],
    }),
    expect: [
      fires('acute-hypercapnic-acidosis', 'critical', SRC.btsIcs),
      silent('ready-to-step-down', SRC.btsIcs),
      noLessOxygen(`${SRC.btsIcs}; no one-click change while acidotic`),
    ],
  }),
  scenario({
    id: 'pv-class-pharmacist-device-request-lower-flow',
    story: 'DeviceRequest nasal cannula 3 L/min with the target in a note, SpO2 95-96 % for 6 h: the lowered order keeps device, note and status',
    pov: 'pharmacist', topic, benign: true, hook: 'patient-view', age: 58,
    build: () => ({
      drafts: [],
      record: [
        onRecord(deviceOrder('Nasal cannula', { flowLPerMin: 3, note: 'Target SpO2 94-98%' }), 2 * DAY),
        c.pneumonia(),
        onFlow(3, [95, 96, 95, 96, 95, 96], hours(5, 4, 3, 2, 1, 0.2)),
      ],
    }),
    expect: [
      fires('ready-to-step-down', 'info', SRC.btsWean),
      suggestionsKeep('Target SpO2 94-98%', `${SRC.btsRange}; the range stays on the lowered order`),
      suggestionsKeep('"status":"active"', 'common practice: a lowered flow is the same running prescription'),
      suggestionsKeep('"codeCodeableConcept":{"text":"Nasal cannula"}', SRC.cdsOnly),
      suggestionsKeep('"valueQuantity":{"value":2,', 'common practice: the coded flow is the new flow'),
      noMoreOxygen(SRC.btsWean),
    ],
  }),
  scenario({
    id: 'pv-class-pharmacist-flow-range-prescription',
    story: 'Prescribed "2-6 L/min nasal cannulae to keep SpO2 94-98%", running at 3 L/min, SpO2 96 % for 5 h: the step is within the prescription',
    pov: 'pharmacist', topic, benign: true, hook: 'patient-view', age: 60,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 2-6 L/min via nasal cannulae to keep SpO2 94-98%'), 2 * DAY),
        c.pneumonia(),
        onFlow(3, [96, 96, 96, 96, 96, 96], hours(5, 4, 3, 2, 1, 0.2)),
      ],
    }),
    expect: [
      fires('ready-to-step-down', 'info', SRC.btsWean),
      says('ready-to-step-down', /if the prescribed flow range allows it/, 'common practice: nurses titrate within a prescribed flow range'),
      suggestionsKeep('2-6 L/min', 'common practice: a valid range prescription is not rewritten to one fixed flow'),
    ],
  }),
];
