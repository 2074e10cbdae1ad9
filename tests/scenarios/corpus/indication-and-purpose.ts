import * as c from '../support/clinical.js';
import { SRC } from '../support/clinical.js';
import { medicationOrder, respRate, serviceOrder, spo2, spo2OnAir, spo2OnFlow } from '../support/fhir.js';
import {
  atMost,
  fires,
  neverSays,
  noMoreOxygen,
  scenario,
  silent,
  type Scenario,
} from '../support/scenario.js';

/**
 * Issue 6 classes 4 (children and unknown age), 7 (oxygen that is not needed) and 8 (orders that
 * are not titrations: comfort, stop, wean, room air).
 */

const ADULT_ONLY = 'adult-checks-only';

/** Oxygen ordered for a condition of BTS 2017 Table 3 with SpO2 on air at or above the bound. */
const notNeeded = (
  id: string,
  story: string,
  pov: Scenario['pov'],
  cond: () => ReturnType<typeof c.acs>,
  onAir: number,
  retired?: string,
): Scenario =>
  scenario({
    id, story, pov, topic: 'class 7: oxygen without hypoxaemia', age: 64,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnAir(onAir), respRate(18), cond()],
    }),
    expect: [
      fires('oxygen-without-hypoxaemia', 'info', `${SRC.btsT3}; ${SRC.bmj}`),
      ...(retired === undefined ? [] : [silent(retired, 'issue 6 class 7: retired into oxygen-without-hypoxaemia')]),
      atMost('info', SRC.btsT3),
    ],
  });

export const INDICATION_AND_PURPOSE: readonly Scenario[] = [
  // --- class 4: children and unknown age --------------------------------------------------------
  scenario({
    id: 'child-9-asthma',
    story: 'Child of 9 with asthma on 2 L/min nasal cannula, 94-98 %, SpO2 92 %',
    pov: 'ward doctor', topic: 'class 4: age', age: 9,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(92), respRate(30), c.acuteAsthma()],
    }),
    expect: [
      fires(ADULT_ONLY, 'info', SRC.btsScope),
      atMost('info', `${SRC.btsScope}: no adult target or titration advice`),
      silent('spo2-below-target', SRC.btsScope),
    ],
  }),
  scenario({
    id: 'child-9-cystic-fibrosis',
    story: 'Child of 9 with cystic fibrosis on 1 L/min, 94-98 % ordered: no adult 88-92 % advice',
    pov: 'pharmacist', topic: 'class 4: age', age: 9,
    build: () => ({
      drafts: [medicationOrder('Oxygen 1 L/min nasal cannula, target SpO2 94-98%', { method: 'Nasal cannula', flowLPerMin: 1 })],
      record: [spo2(95), respRate(24), c.cysticFibrosis()],
    }),
    expect: [fires(ADULT_ONLY, 'info', SRC.btsScope), silent('target-above-hypercapnic-range', SRC.btsScope)],
  }),
  scenario({
    id: 'teen-15-pneumonia',
    story: '15-year-old with pneumonia on 2 L/min, 94-98 %, SpO2 96 %',
    pov: 'respiratory therapist', topic: 'class 4: age', age: 15, benign: true,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(96), respRate(20), c.pneumonia()],
    }),
    expect: [fires(ADULT_ONLY, 'info', SRC.btsScope)],
  }),
  scenario({
    id: 'teen-15-above-target',
    story: '15-year-old on 3 L/min with SpO2 100 %: no adult step-down advice',
    pov: 'ward doctor', topic: 'class 4: age', age: 15,
    build: () => ({
      drafts: [serviceOrder('Oxygen 3 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnFlow(100, 3), respRate(18), c.pneumonia()],
    }),
    expect: [fires(ADULT_ONLY, 'info', SRC.btsScope), silent('spo2-above-target', SRC.btsScope)],
  }),
  scenario({
    id: 'adult-16-boundary',
    story: 'Just 16, pneumonia, 2 L/min, 94-98 %, SpO2 96 %: adult checks apply',
    pov: 'pharmacist', topic: 'class 4: age', age: 16, benign: true,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(96), respRate(18), c.pneumonia()],
    }),
    expect: [silent(ADULT_ONLY, SRC.btsScope)],
  }),
  scenario({
    id: 'age-unknown',
    story: 'No birth date on record, pneumonia, 2 L/min, 94-98 %, SpO2 95 %: the age is said to be unknown',
    pov: 'respiratory therapist', topic: 'class 4: age', age: undefined,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(95), respRate(18), c.pneumonia()],
    }),
    expect: [fires(ADULT_ONLY, 'info', `${SRC.btsScope}; issue 6 class 4: an unknown age is said to be unknown`), atMost('info', SRC.alertFatigue)],
  }),

  // --- class 7: oxygen that is not needed -------------------------------------------------------
  notNeeded('no-hypoxaemia-acs', 'Acute coronary syndrome, SpO2 97 % on air, oxygen ordered', 'ward doctor', c.acs, 97),
  notNeeded('no-hypoxaemia-myocardial-infarction', 'Myocardial infarction, SpO2 95 % on air, oxygen ordered', 'pharmacist', c.stemi, 95),
  notNeeded('no-hypoxaemia-stroke', 'Acute ischaemic stroke, SpO2 96 % on air, oxygen ordered', 'ward doctor', c.stroke, 96),
  notNeeded('no-hypoxaemia-pregnancy', 'Pregnant at 32 weeks, SpO2 98 % on air, oxygen ordered', 'respiratory therapist', c.pregnancy, 98, 'pregnancy-oxygen'),
  notNeeded('no-hypoxaemia-hyperventilation', 'Anxiety with hyperventilation, SpO2 99 % on air, oxygen ordered', 'pharmacist', c.hyperventilation, 99),
  notNeeded('no-hypoxaemia-sickle-cell', 'Sickle cell crisis, SpO2 97 % on air, oxygen ordered', 'respiratory therapist', c.sickleCrisis, 97, 'sickle-cell-oxygen'),
  scenario({
    id: 'no-hypoxaemia-acs-on-at-risk-range',
    story: 'COPD with an acute coronary syndrome, SpO2 90 % on air, oxygen ordered with 88-92 %',
    pov: 'ward doctor', topic: 'class 7: oxygen without hypoxaemia', age: 72,
    build: () => ({
      drafts: [serviceOrder('Oxygen 1 L/min via nasal cannula, target SpO2 88-92%')],
      record: [...spo2OnAir(90), respRate(18), c.copd(), c.acs()],
    }),
    expect: [fires('oxygen-without-hypoxaemia', 'warning', `${SRC.btsT3}; ${SRC.btsT4} (oxygen above need raises PaCO2)`)],
  }),
  scenario({
    id: 'acs-hypoxaemic-oxygen-needed',
    story: 'Acute coronary syndrome with pulmonary oedema, SpO2 91 % on air, oxygen ordered 94-98 %',
    pov: 'pharmacist', topic: 'class 7: oxygen without hypoxaemia', age: 70, benign: true,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnAir(91), respRate(22), c.acs()],
    }),
    expect: [silent('oxygen-without-hypoxaemia', `${SRC.btsT3}: 91 % is below the 94 % bound`)],
  }),
  scenario({
    id: 'pregnancy-hypoxaemic-oxygen-needed',
    story: 'Pregnant at 32 weeks with pneumonia, SpO2 93 % on air, oxygen ordered 94-98 %',
    pov: 'ward doctor', topic: 'class 7: oxygen without hypoxaemia', age: 31, benign: true,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnAir(93), respRate(20), c.pregnancy(), c.pneumonia()],
    }),
    expect: [silent('oxygen-without-hypoxaemia', 'BTS 2017 (pregnancy): oxygen if SpO2 < 94 %')],
  }),
  scenario({
    id: 'stroke-reading-on-oxygen-only',
    story: 'Stroke, SpO2 96 % measured on 2 L/min (no reading on air): nothing says oxygen is not needed',
    pov: 'respiratory therapist', topic: 'class 7: oxygen without hypoxaemia', age: 79, benign: true,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnFlow(96, 2), respRate(16), c.stroke()],
    }),
    expect: [silent('oxygen-without-hypoxaemia', `${SRC.btsT3}: needs a recent SpO2 on air`)],
  }),
  scenario({
    id: 'sickle-cell-hypoxaemic',
    story: 'Sickle cell crisis, SpO2 92 % on air: oxygen needed, no card says otherwise',
    pov: 'pharmacist', topic: 'class 7: oxygen without hypoxaemia', age: 22, benign: true,
    build: () => ({
      drafts: [medicationOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%', { method: 'Nasal cannula', flowLPerMin: 2 })],
      record: [...spo2OnAir(92), respRate(22), c.sickleCrisis()],
    }),
    expect: [silent('oxygen-without-hypoxaemia', 'BTS 2008/2017 Table 2: oxygen only if hypoxaemic'), silent('sickle-cell-oxygen', 'retired id')],
  }),

  // --- class 8: orders that are not titrations --------------------------------------------------
  scenario({
    id: 'palliative-comfort-no-target',
    story: 'Metastatic lung cancer, end of life: "oxygen 2 L/min via nasal cannula for comfort, no SpO2 target"',
    pov: 'ward doctor', topic: 'class 8: not a titration', age: 81, benign: true,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula for comfort; no SpO2 target (end-of-life care)')],
      record: [spo2(86), respRate(24), c.lungCancer()],
    }),
    expect: [
      silent('target-range-missing', SRC.btsPalliative),
      silent('spo2-below-target', SRC.btsPalliative),
      neverSays(/target SpO2 range to/i, SRC.btsPalliative),
    ],
  }),
  scenario({
    id: 'palliative-comfort-copd',
    story: 'End-stage COPD on comfort care: "oxygen 1 L/min if breathless, for comfort only, no target"',
    pov: 'pharmacist', topic: 'class 8: not a titration', age: 84, benign: true,
    build: () => ({
      drafts: [medicationOrder('Oxygen 1 L/min nasal cannula if breathless, for comfort only, no target', { method: 'Nasal cannula', flowLPerMin: 1 })],
      record: [spo2(85), respRate(22), c.copd(), c.lungCancer()],
    }),
    expect: [silent('target-range-missing', SRC.btsPalliative), silent('spo2-below-target', SRC.btsPalliative)],
  }),
  scenario({
    id: 'stop-oxygen-room-air',
    story: 'Recovered pneumonia, SpO2 96 % on 1 L/min: "Stop oxygen, room air"',
    pov: 'ward doctor', topic: 'class 8: not a titration', age: 55, benign: true,
    build: () => ({
      drafts: [serviceOrder('Stop oxygen. Room air.')],
      record: [...spo2OnFlow(96, 1), respRate(16), c.pneumonia()],
    }),
    expect: [
      noMoreOxygen('issue 6 class 8: a stop order is never told to raise the flow (common practice)'),
      silent('target-range-missing', 'common practice: a stop order needs no target'),
      neverSays(/rebreath/i, SRC.jensen),
    ],
  }),
  scenario({
    id: 'room-air-trial-zero-flow',
    story: 'Trial off oxygen: nasal cannula at 0 L/min, SpO2 95 % on 1 L/min before',
    pov: 'respiratory therapist', topic: 'class 8: not a titration', age: 63, benign: true,
    build: () => ({
      drafts: [medicationOrder('Nasal cannula 0 L/min (room air trial), target SpO2 94-98%', { method: 'Nasal cannula', flowLPerMin: 0 })],
      record: [...spo2OnFlow(95, 1), respRate(16), c.pneumonia()],
    }),
    expect: [
      noMoreOxygen('issue 6 class 8: never raise the flow on a room-air trial (common practice)'),
      silent('flow-outside-device-range', 'common practice: 0 L/min is off, not a cannula setting'),
    ],
  }),
  scenario({
    id: 'wean-to-off',
    story: 'Pneumonia improving, SpO2 97 % on 1 L/min: "wean oxygen to off, keep SpO2 94-98%"',
    pov: 'pharmacist', topic: 'class 8: not a titration', age: 58, benign: true,
    build: () => ({
      drafts: [serviceOrder('Wean oxygen to off via nasal cannula, keep SpO2 94-98%')],
      record: [...spo2OnFlow(97, 1), respRate(16), c.pneumonia()],
    }),
    expect: [noMoreOxygen('common practice: a weaning order is never told to raise the flow')],
  }),
  scenario({
    id: 'face-mask-removed-room-air',
    story: 'Simple face mask removed, room air: no rebreathing warning about a mask no longer on',
    pov: 'respiratory therapist', topic: 'class 8: not a titration', age: 66, benign: true,
    build: () => ({
      drafts: [serviceOrder('Simple face mask off; room air, target SpO2 94-98%')],
      record: [...spo2OnFlow(96, 5), respRate(17), c.pneumonia()],
    }),
    expect: [silent('flow-outside-device-range', SRC.jensen), neverSays(/rebreath/i, SRC.jensen), noMoreOxygen(SRC.common)],
  }),
  scenario({
    id: 'wean-copd-stepwise',
    story: 'COPD, SpO2 93 % on 1 L/min: "wean by 0.5 L/min steps to off, target SpO2 88-92%"',
    pov: 'ward doctor', topic: 'class 8: not a titration', age: 70, benign: true,
    build: () => ({
      drafts: [serviceOrder('Wean oxygen by 0.5 L/min steps to off via nasal cannula, target SpO2 88-92%')],
      record: [...spo2OnFlow(93, 1), respRate(18), c.copd()],
    }),
    expect: [noMoreOxygen(SRC.btsT4)],
  }),
  scenario({
    id: 'discontinue-oxygen-copd',
    story: 'COPD ready for discharge, SpO2 91 % on 1 L/min: "Discontinue oxygen"',
    pov: 'pharmacist', topic: 'class 8: not a titration', age: 68, benign: true,
    build: () => ({
      drafts: [serviceOrder('Discontinue oxygen')],
      record: [...spo2OnFlow(91, 1), respRate(17), c.copd()],
    }),
    expect: [noMoreOxygen(SRC.common), silent('target-range-missing', SRC.common)],
  }),
];
