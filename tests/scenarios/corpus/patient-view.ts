import * as c from '../support/clinical.js';
import { SRC } from '../support/clinical.js';
import {
  bloodGas,
  deviceOrder,
  fio2Percent,
  medicationOrder,
  onRecord,
  serviceOrder,
  spo2,
  spo2OnFlow,
} from '../support/fhir.js';
import {
  fires,
  noLessOxygen,
  noMoreOxygen,
  scenario,
  silent,
  suggestionsKeep,
  type Scenario,
} from '../support/scenario.js';

/**
 * The titration review on patient-view: a respiratory therapist, ward doctor or pharmacist opens the
 * record of a patient on oxygen. Readings are hourly unless the story says otherwise (minutes before
 * NOW). Look-back 8 h; a reading holds at most 2 h (titrationReview.*, local choices). The BTS 2017
 * weaning steps are from memory (SRC.btsWean).
 */

const topic = 'patient-view titration review';
const hours = (...h: number[]): number[] => h.map((x) => x * 60);
/** SpO2 with the flow recorded at the same time (LOINC 59408-5, 3151-8), at each age. */
const onFlow = (lPerMin: number, pairs: readonly (readonly [number, number])[]) =>
  pairs.flatMap(([percent, minutesAgo]) => spo2OnFlow(percent, lPerMin, minutesAgo));
const at = (values: readonly number[], ages: readonly number[]) => values.map((v, i) => [v, ages[i] ?? 0] as const);
const WEAN_MEMORY = 'BTS 2017 (from memory): step down stable patients in or above range; stop from about 2 L/min after two readings in range';
const DAY = 24 * 60;

export const PATIENT_VIEW: readonly Scenario[] = [
  scenario({
    id: 'pv-benign-pneumonia-stable-3l',
    story: 'Pneumonia day 4 on 3 L/min nasal cannula, 94-98 % ordered, SpO2 95-96 % hourly for 6 h',
    pov: 'respiratory therapist', topic, benign: true, hook: 'patient-view', age: 66,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 3 L/min via nasal cannulae. Target SpO2 94-98%'), 3 * DAY),
        c.pneumonia(),
        onFlow(3, at([95, 96, 95, 96, 96, 95, 96], hours(6, 5, 4, 3, 2, 1, 0.2))),
      ],
    }),
    expect: [
      fires('ready-to-step-down', 'info', WEAN_MEMORY),
      silent('time-below-target', 'BTS 2017, Tables 1-3: 95-96 % is within 94-98 %'),
      noMoreOxygen(SRC.btsWean),
      suggestionsKeep('Target SpO2 94-98%', SRC.cdsOnly),
    ],
  }),
  scenario({
    id: 'pv-benign-convalescent-above-target-4l',
    story: 'Recovering pneumonia on 4 L/min, SpO2 99 % most of the last 6 h, 94-98 % ordered',
    pov: 'ward doctor', topic, benign: true, hook: 'patient-view', age: 59,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 4 L/min via nasal cannulae. Target SpO2 94-98%'), 2 * DAY),
        c.pneumonia(),
        onFlow(4, at([99, 99, 98, 99, 99, 99], hours(5, 4, 3, 2, 1, 0.2))),
      ],
    }),
    expect: [
      fires('time-above-target-on-oxygen', 'info', 'BTS 2017: lower the oxygen above the target range; BMJ 2018: SpO2 <= 96 %'),
      silent('ready-to-step-down', 'common practice: one card offers the step, not two'),
      noMoreOxygen(SRC.btsWean),
    ],
  }),
  scenario({
    id: 'pv-benign-stop-from-2l',
    story: 'Convalescent on 2 L/min nasal cannula, SpO2 96-97 % for 6 h, 94-98 % ordered',
    pov: 'pharmacist', topic, benign: true, hook: 'patient-view', age: 72,
    build: () => ({
      drafts: [],
      record: [
        onRecord(medicationOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%', { method: 'nasal cannula', flowLPerMin: 2 }), 3 * DAY),
        c.pneumonia(),
        onFlow(2, at([96, 97, 96, 97, 96, 97], hours(5, 4, 3, 2, 1, 0.3))),
      ],
    }),
    expect: [
      fires('ready-to-step-down', 'info', WEAN_MEMORY),
      suggestionsKeep('target SpO2 94-98%', SRC.cdsOnly),
      noMoreOxygen(SRC.btsWean),
    ],
  }),
  scenario({
    id: 'pv-benign-copd-venturi-28-at-target',
    story: 'COPD with previous NIV on 28 % Venturi at 4 L/min, 88-92 %, SpO2 89-91 % for 6 h',
    pov: 'respiratory therapist', topic, benign: true, hook: 'patient-view', age: 74,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen via Venturi 28% at 4 L/min, target SpO2 88-92%'), 2 * DAY),
        c.copd(),
        c.previousNiv(),
        ...[[90, 360], [89, 300], [91, 240], [90, 180], [90, 120], [91, 60], [90, 10]].flatMap(([p, m]) => [
          spo2(p ?? 90, m),
          fio2Percent(28, m),
        ]),
      ],
    }),
    expect: [
      silent('time-above-target-on-oxygen', SRC.btsT4),
      silent('time-below-target', SRC.btsT4),
      silent('ready-to-step-down', 'common practice: a Venturi setting change is the team\'s, not one click'),
    ],
  }),
  scenario({
    id: 'pv-benign-no-oxygen-order',
    story: 'Patient on air with no oxygen order, SpO2 97 %: the review does not apply',
    pov: 'ward doctor', topic, benign: true, hook: 'patient-view', age: 45,
    build: () => ({ drafts: [], record: [c.pneumonia(), spo2(97, 60), spo2(97, 10)] }),
    expect: [
      silent('ready-to-step-down', 'common practice: no oxygen order, nothing to titrate'),
      silent('time-above-target-on-oxygen', 'BTS 2017: above target on air needs no oxygen'),
      silent('required-data-unavailable', 'common practice: a review that does not apply is not partial'),
    ],
  }),
  scenario({
    id: 'pv-benign-palliative-comfort-oxygen',
    story: 'Terminal care, comfort oxygen 2 L/min with no target, SpO2 84-86 %',
    pov: 'pharmacist', topic, benign: true, hook: 'patient-view', age: 88,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 2 L/min via nasal cannulae for comfort only. No SpO2 target'), 2 * DAY),
        onFlow(2, at([85, 84, 86], hours(4, 2, 0.5))),
      ],
    }),
    expect: [
      silent('time-below-target', SRC.btsPalliative),
      silent('ready-to-step-down', SRC.btsPalliative),
    ],
  }),
  scenario({
    id: 'pv-benign-high-flow-stable',
    story: 'On high-flow nasal oxygen 40 L/min FiO2 0.30, SpO2 95-96 %: weaning is the team\'s',
    pov: 'respiratory therapist', topic, benign: true, hook: 'patient-view', age: 63,
    build: () => ({
      drafts: [],
      record: [
        onRecord(deviceOrder('High flow nasal cannula', { flowLPerMin: 40, fio2Percent: 30, note: 'Target SpO2 94-98%' }), DAY),
        c.pneumonia(),
        ...[[95, 300], [96, 240], [95, 180], [96, 120], [96, 60], [95, 10]].flatMap(([p, m]) => [spo2(p ?? 95, m), fio2Percent(30, m)]),
      ],
    }),
    expect: [
      silent('ready-to-step-down', 'common practice: stepping down from high flow is a change of support (device tiers)'),
      noLessOxygen('common practice: no one-click step down a tier'),
    ],
  }),
  scenario({
    id: 'pv-copd-above-target-on-2l',
    story: 'COPD, chronic type 2 failure, 88-92 % ordered, on 2 L/min with SpO2 95-96 % for 6 h',
    pov: 'respiratory therapist', topic, hook: 'patient-view', age: 69,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 2 L/min via nasal cannulae. Target SpO2 88-92%'), 2 * DAY),
        c.copd(),
        c.chronicType2(),
        onFlow(2, at([95, 96, 95, 96, 96, 95], hours(5, 4, 3, 2, 1, 0.2))),
      ],
    }),
    expect: [
      fires('time-above-target-on-oxygen', 'warning', `${SRC.btsT4}; Echevarria 2021: SpO2 > 92 % and COPD mortality`),
      noMoreOxygen(SRC.btsT4),
    ],
  }),
  scenario({
    id: 'pv-pneumonia-falling-below-target',
    story: 'Pneumonia on 4 L/min: SpO2 96 % six hours ago, 92 % an hour ago, 91 % now; 94-98 % ordered',
    pov: 'ward doctor', topic, hook: 'patient-view', age: 77,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 4 L/min via nasal cannulae. Target SpO2 94-98%'), DAY),
        c.pneumonia(),
        onFlow(4, at([96, 95, 94, 92, 91], hours(6, 4, 2, 1, 0.2))),
      ],
    }),
    expect: [
      fires('time-below-target', 'warning', 'BTS 2017: below the target range, more oxygen within the prescription and review'),
      fires('rising-oxygen-need', 'warning', SRC.btsFall),
      silent('ready-to-step-down', SRC.btsWean),
      noLessOxygen('BTS 2017, Tables 1-4: below target needs more oxygen, not less'),
    ],
  }),
  scenario({
    id: 'pv-copd-flow-raised-no-gas',
    story: 'COPD, chronic type 2 failure, flow raised 1 → 2 L/min three hours ago, last gas 7 h ago',
    pov: 'pharmacist', topic, hook: 'patient-view', age: 70,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 1-2 L/min via nasal cannulae. Target SpO2 88-92%'), 2 * DAY),
        c.copd(),
        c.chronicType2(),
        onFlow(1, at([87, 87], hours(6, 4))),
        onFlow(2, at([89, 90, 90], hours(3, 2, 0.3))),
        bloodGas({ ph: 7.37, pco2: 6.8, po2: 7.6, hco3: 31, minutesAgo: 420 }),
      ],
    }),
    expect: [
      fires('blood-gas-overdue', 'warning', SRC.btsTables),
      noLessOxygen('BTS 2017, Table 4: no step down while the need has just risen'),
    ],
  }),
  scenario({
    id: 'pv-metabolic-acidosis-no-step-down',
    story: 'Urosepsis with lactic acidosis, pH 7.28, PaCO2 4.0 kPa, on 3 L/min with SpO2 96-97 % for 6 h',
    pov: 'ward doctor', topic, hook: 'patient-view', age: 64,
    build: () => ({
      drafts: [],
      record: [
        onRecord(serviceOrder('Oxygen 3 L/min via nasal cannulae. Target SpO2 94-98%'), DAY),
        onFlow(3, at([96, 97, 96, 97, 96, 97], hours(5, 4, 3, 2, 1, 0.2))),
        bloodGas({ ph: 7.28, pco2: 4.0, po2: 11.5, hco3: 14, minutesAgo: 45 }),
      ],
    }),
    expect: [
      silent('ready-to-step-down', 'common practice: acidosis (pH < 7.35, RCEM) is a sick patient to review before any step down'),
      noLessOxygen('common practice: no one-click step down during acidosis'),
    ],
  }),
  scenario({
    id: 'pv-high-flow-failing',
    story: 'Pneumonia on high flow 50 L/min FiO2 0.70, SpO2 89-90 % for 3 h, 94-98 % ordered',
    pov: 'respiratory therapist', topic, hook: 'patient-view', age: 58,
    build: () => ({
      drafts: [],
      record: [
        onRecord(deviceOrder('High flow nasal cannula', { flowLPerMin: 50, fio2Percent: 70, note: 'Target SpO2 94-98%' }), DAY),
        c.pneumonia(),
        ...[[91, 180], [90, 120], [89, 60], [89, 10]].flatMap(([p, m]) => [spo2(p ?? 89, m), fio2Percent(70, m)]),
      ],
    }),
    expect: [
      fires('escalated-support-failing', 'critical', SRC.escalation),
      silent('time-below-target', 'common practice: one card for one situation (escalated-support-failing owns it)'),
      silent('ready-to-step-down', SRC.btsT2),
      noLessOxygen(SRC.btsT2),
    ],
  }),
];
