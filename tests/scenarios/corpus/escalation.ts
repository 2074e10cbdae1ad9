import * as c from '../support/clinical.js';
import { SRC } from '../support/clinical.js';
import { bloodGas, deviceOrder, fio2Percent, o2Flow, onRecord, respRate, serviceOrder, spo2, spo2OnFlow } from '../support/fhir.js';
import {
  atMost,
  fires,
  firesOneOf,
  neverSays,
  noLessOxygen,
  oneFio2,
  scenario,
  silent,
  type Scenario,
} from '../support/scenario.js';

/**
 * Issue 6 classes 3 (high flow and NIV failing; ROX by hours on high flow), 9 (plausible delivered
 * FiO2) and 10 (a rising oxygen need, a fall in SpO2).
 */

const FAILING = ['escalated-support-failing', 'high-oxygen-requirement'];

/** High flow at `fio2` %, started `startedMinutesAgo` (undefined: start unknown). */
const highFlow = (fio2: number, flow: number, startedMinutesAgo: number | undefined, target = '94-98%') => {
  const draft = deviceOrder('High-flow nasal cannula', { flowLPerMin: flow, fio2Percent: fio2, note: `Target SpO2 ${target}` }, {
    authoredMinutesAgo: startedMinutesAgo === undefined ? undefined : 5,
  });
  const running = onRecord(draft, startedMinutesAgo);
  return { draft, running };
};

export const ESCALATION: readonly Scenario[] = [
  // --- class 3: top-of-ward therapy failing ------------------------------------------------------
  scenario({
    id: 'hfnc-fio2-70-below-target',
    story: 'Pneumonia on high flow 50 L/min at FiO2 0.70 for 3 h, SpO2 89 % (94-98 %), RR 30',
    pov: 'respiratory therapist', topic: 'class 3: escalated support', age: 61,
    build: () => {
      const { draft, running } = highFlow(70, 50, 180);
      return { drafts: [draft], record: [running, spo2(89), respRate(30), c.pneumonia()] };
    },
    expect: [
      fires('escalated-support-failing', 'critical', SRC.escalation),
      noLessOxygen(SRC.escalation),
      oneFio2('issue 6 class 9: high flow delivers its set FiO2 (check-values.md §2a); one setting, one FiO2'),
    ],
  }),
  scenario({
    id: 'hfnc-fio2-60-at-threshold-below-target',
    story: 'Pneumonia on high flow 40 L/min at FiO2 0.60 (the policy threshold), SpO2 91 %',
    pov: 'ward doctor', topic: 'class 3: escalated support', age: 55,
    build: () => {
      const { draft, running } = highFlow(60, 40, 240);
      return { drafts: [draft], record: [running, spo2(91), respRate(26), c.pneumonia()] };
    },
    expect: [fires('escalated-support-failing', 'critical', SRC.escalation), noLessOxygen(SRC.escalation)],
  }),
  scenario({
    id: 'hfnc-fio2-45-below-target',
    story: 'Pneumonia on high flow at FiO2 0.45, SpO2 92 %: below target but below the failing FiO2',
    pov: 'respiratory therapist', topic: 'class 3: escalated support', age: 66,
    build: () => {
      const { draft, running } = highFlow(45, 40, 240);
      return { drafts: [draft], record: [running, spo2(92), respRate(22), c.pneumonia()] };
    },
    expect: [
      silent('escalated-support-failing', `${SRC.escalation} (0.45 < 0.6)`),
      fires('spo2-below-target', 'warning', SRC.btsTables),
      noLessOxygen(SRC.btsTables),
    ],
  }),
  scenario({
    id: 'hfnc-saturation-84-no-reservoir-offer',
    story: 'On high flow at FiO2 0.80, SpO2 84 %: never offer a reservoir mask (a lower tier)',
    pov: 'ward doctor', topic: 'class 3: escalated support', age: 70,
    build: () => {
      const { draft, running } = highFlow(80, 50, 120);
      return { drafts: [draft], record: [running, spo2(84), respRate(34), c.pneumonia()] };
    },
    expect: [
      fires('escalated-support-failing', 'critical', SRC.escalation),
      noLessOxygen('issue 6 class 3: never offer a lower tier of device on high flow or NIV'),
      neverSays(/reservoir mask at 15/i, 'issue 6 class 3: a reservoir mask is a step down from high flow'),
    ],
  }),
  scenario({
    id: 'niv-copd-below-target',
    story: 'COPD on NIV with FiO2 0.40, SpO2 84 % against 88-92 %',
    pov: 'respiratory therapist', topic: 'class 3: escalated support', age: 68,
    // The NIV is on the record (running 2 h), as the story says: a new NIV order written after the
    // reading is the response to it, not its failure (see cpap-started-after-low-reading).
    build: () => {
      const draft = deviceOrder('NIV (BiPAP)', { fio2Percent: 40, note: 'IPAP 20 EPAP 5, target SpO2 88-92%' });
      return { drafts: [draft], record: [onRecord(draft, 120), spo2(84), respRate(28), c.copd()] };
    },
    expect: [fires('escalated-support-failing', 'critical', SRC.escalation), noLessOxygen(SRC.escalation)],
  }),
  scenario({
    id: 'cpap-saturation-82-no-reservoir-offer',
    story: 'Pneumonia on CPAP FiO2 0.60, SpO2 82 %: critical-care review, no reservoir mask',
    pov: 'ward doctor', topic: 'class 3: escalated support', age: 63,
    // The CPAP is on the record (running 3 h), as the story says.
    build: () => {
      const draft = deviceOrder('CPAP', { fio2Percent: 60, note: 'CPAP 10 cmH2O, target SpO2 94-98%' });
      return { drafts: [draft], record: [onRecord(draft, 180), spo2(82), respRate(32), c.pneumonia()] };
    },
    expect: [
      fires('escalated-support-failing', 'critical', SRC.escalation),
      noLessOxygen(SRC.escalation),
      neverSays(/reservoir mask at 15/i, 'issue 6 class 3: a reservoir mask is a step down from CPAP'),
    ],
  }),
  scenario({
    id: 'cpap-started-after-low-reading',
    story: 'Pneumonia, SpO2 82 %, no support on record; CPAP FiO2 0.60 ordered now: the response to the reading, not its failure',
    pov: 'ward doctor', topic: 'class 3: escalated support', age: 57,
    build: () => ({
      drafts: [deviceOrder('CPAP', { fio2Percent: 60, note: 'CPAP 10 cmH2O, target SpO2 94-98%' })],
      record: [spo2(82), respRate(32), c.pneumonia()],
    }),
    expect: [
      silent('escalated-support-failing', `${SRC.escalation} (not yet on CPAP when SpO2 was read)`),
      fires('spo2-below-target', 'critical', 'BTS 2017, Table 2: below 85 % is critical'),
      noLessOxygen('issue 6 class 3: never offer a reservoir mask (a lower tier) in place of a CPAP order'),
    ],
  }),
  scenario({
    id: 'niv-copd-at-target',
    story: 'COPD on NIV with FiO2 0.30, SpO2 90 % within 88-92 %: not failing',
    pov: 'respiratory therapist', topic: 'class 3: escalated support', age: 72,
    build: () => ({
      drafts: [deviceOrder('NIV', { fio2Percent: 30, note: 'target SpO2 88-92%' })],
      record: [spo2(90), respRate(20), c.copd()],
    }),
    expect: [silent('escalated-support-failing', SRC.escalation), atMost('warning', SRC.escalation)],
  }),
  scenario({
    id: 'rox-at-2h-below-2-85',
    story: 'High flow for 2.5 h at FiO2 0.90, SpO2 86 %, RR 36: ROX 2.65, below the 2-h threshold',
    pov: 'respiratory therapist', topic: 'class 3: ROX', age: 59,
    build: () => {
      const { draft, running } = highFlow(90, 60, 150);
      return { drafts: [draft], record: [running, spo2(86), respRate(36), c.pneumonia()] };
    },
    expect: [firesOneOf(FAILING, 'critical', SRC.roca), noLessOxygen(SRC.roca)],
  }),
  scenario({
    id: 'rox-at-6h-below-3-47-spo2-at-target',
    story: 'High flow for 6.5 h at FiO2 0.80, SpO2 94 % (at target), RR 36: ROX 3.26 < 3.47',
    pov: 'ward doctor', topic: 'class 3: ROX', age: 64,
    build: () => {
      const { draft, running } = highFlow(80, 50, 390);
      return { drafts: [draft], record: [running, spo2(94), respRate(36), c.pneumonia()] };
    },
    expect: [firesOneOf(FAILING, 'critical', SRC.roca)],
  }),
  scenario({
    id: 'rox-at-12h-below-3-85',
    story: 'High flow for 13 h at FiO2 0.80, SpO2 94 %, RR 32: ROX 3.67, below the 12-h threshold 3.85',
    pov: 'respiratory therapist', topic: 'class 3: ROX', age: 67,
    build: () => {
      const { draft, running } = highFlow(80, 50, 780);
      return { drafts: [draft], record: [running, spo2(94), respRate(32), c.pneumonia()] };
    },
    expect: [firesOneOf(FAILING, 'critical', SRC.roca)],
  }),
  scenario({
    id: 'rox-at-7h-3-67-not-failing',
    story: 'Same numbers at 7 h (ROX 3.67, above the 6-h threshold 3.47), SpO2 at target: no critical card',
    pov: 'ward doctor', topic: 'class 3: ROX', age: 67,
    build: () => {
      const { draft, running } = highFlow(80, 50, 420);
      return { drafts: [draft], record: [running, spo2(94), respRate(32), c.pneumonia()] };
    },
    expect: [atMost('warning', SRC.roca)],
  }),
  scenario({
    id: 'rox-start-unknown',
    story: 'High flow of unknown start at FiO2 0.80, SpO2 94 %, RR 38 (ROX 3.09): say which threshold was used',
    pov: 'respiratory therapist', topic: 'class 3: ROX', age: 58,
    build: () => {
      const { draft, running } = highFlow(80, 50, undefined);
      return { drafts: [draft], record: [running, spo2(94), respRate(38), c.pneumonia()] };
    },
    expect: [
      firesOneOf(FAILING, 'critical', `${SRC.roca}; start unknown: the most cautious (12-h, 3.85) threshold, common practice`),
      neverSays(/ROX \d+\.\d{3}/, 'issue 6 class 12: no false precision (Roca 2019 reports ROX to two decimals)'),
    ],
  }),
  scenario({
    id: 'rox-good-at-6h',
    story: 'High flow for 6 h at FiO2 0.40, SpO2 96 %, RR 20 (ROX 12): no critical card',
    pov: 'ward doctor', topic: 'class 3: ROX', age: 50,
    build: () => {
      const { draft, running } = highFlow(40, 40, 360);
      return { drafts: [draft], record: [running, spo2(96), respRate(20), c.pneumonia()] };
    },
    expect: [atMost('warning', SRC.roca), silent('escalated-support-failing', SRC.escalation)],
  }),
  scenario({
    id: 'hfnc-not-called-low-flow-mixing',
    story: 'High flow 40 L/min at FiO2 0.35, SpO2 96 %: the FiO2 shown is the set FiO2, never a low-flow mixing figure',
    pov: 'respiratory therapist', topic: 'class 9: plausible FiO2', age: 62,
    build: () => {
      const { draft, running } = highFlow(35, 40, 600);
      return { drafts: [draft], record: [running, spo2(96), respRate(19), c.pneumonia()] };
    },
    expect: [neverSays(/low-flow mixing/i, 'issue 6 class 9: high flow is not low-flow mixing (check-values.md §2a)')],
  }),

  // --- class 9: plausible delivered FiO2 ---------------------------------------------------------
  scenario({
    id: 'calm-patient-cannula-4l',
    story: 'Calm patient (RR 14) with pneumonia on 4 L/min nasal cannula, 94-98 %, SpO2 96 %',
    pov: 'ward doctor', topic: 'class 9: plausible FiO2', age: 51, benign: true,
    build: () => ({
      drafts: [serviceOrder('Oxygen 4 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(96), respRate(14), c.pneumonia()],
    }),
    expect: [silent('high-oxygen-requirement', SRC.fio2Envelope)],
  }),
  scenario({
    id: 'calm-patient-cannula-4l-recorded',
    story: 'Chart shows 4 L/min nasal cannula with SpO2 95 %, RR 12; order re-signed',
    pov: 'pharmacist', topic: 'class 9: plausible FiO2', age: 74, benign: true,
    build: () => ({
      drafts: [serviceOrder('Nasal cannula 4 L/min, target SpO2 94-98%')],
      record: [...spo2OnFlow(95, 4), respRate(12), c.pneumonia()],
    }),
    expect: [
      silent('high-oxygen-requirement', SRC.fio2Envelope),
      oneFio2('issue 6 class 9: one device at one setting shows one FiO2 (common practice)'),
    ],
  }),
  scenario({
    id: 'calm-patient-cannula-3l-slow-rr',
    story: 'Post-op patient breathing slowly (RR 10) on 3 L/min nasal cannula, 94-98 %, SpO2 97 %',
    pov: 'respiratory therapist', topic: 'class 9: plausible FiO2', age: 49, benign: true,
    build: () => ({
      drafts: [serviceOrder('Oxygen 3 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(97), respRate(10), c.postOp()],
    }),
    expect: [silent('high-oxygen-requirement', SRC.fio2Envelope)],
  }),

  // --- class 10: rising oxygen need --------------------------------------------------------------
  scenario({
    id: 'rising-flow-2-4-6',
    story: 'Pneumonia: flow raised 2 -> 4 -> 6 L/min over 5 h to hold SpO2 94 %; new order for 6 L/min',
    pov: 'ward doctor', topic: 'class 10: rising need', age: 60,
    build: () => ({
      drafts: [serviceOrder('Oxygen 6 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnFlow(95, 2, 300), ...spo2OnFlow(94, 4, 180), ...spo2OnFlow(94, 6, 30), respRate(24), c.pneumonia()],
    }),
    expect: [fires('rising-oxygen-need', 'warning', SRC.btsRising), noLessOxygen(SRC.btsRising)],
  }),
  scenario({
    id: 'rising-fio2-on-high-flow',
    story: 'High flow FiO2 raised 0.40 -> 0.50 -> 0.55 over 4 h to hold SpO2 94 %',
    pov: 'respiratory therapist', topic: 'class 10: rising need', age: 65,
    build: () => {
      const { draft, running } = highFlow(55, 50, 600);
      return {
        drafts: [draft],
        record: [running, spo2(95, 240), fio2Percent(40, 240), spo2(94, 120), fio2Percent(50, 120), spo2(94, 20), fio2Percent(55, 20), respRate(24), c.pneumonia()],
      };
    },
    expect: [fires('rising-oxygen-need', 'warning', SRC.btsRising)],
  }),
  scenario({
    id: 'spo2-fall-4-points-same-flow',
    story: 'Post-op on 2 L/min: SpO2 98 % three hours ago, 94 % now, flow unchanged',
    pov: 'ward doctor', topic: 'class 10: rising need', age: 71,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnFlow(98, 2, 180), ...spo2OnFlow(94, 2, 15), respRate(20), c.postOp()],
    }),
    expect: [fires('rising-oxygen-need', 'warning', SRC.btsFall)],
  }),
  scenario({
    id: 'spo2-fall-despite-increase',
    story: 'Pneumonia: flow raised 2 -> 4 L/min yet SpO2 fell 96 -> 92 %',
    pov: 'pharmacist', topic: 'class 10: rising need', age: 77,
    build: () => ({
      drafts: [serviceOrder('Oxygen 4 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnFlow(96, 2, 200), ...spo2OnFlow(92, 4, 20), respRate(24), c.pneumonia()],
    }),
    expect: [fires('rising-oxygen-need', 'warning', SRC.btsFall), noLessOxygen(SRC.btsTables)],
  }),
  scenario({
    id: 'spo2-fall-2-points-only',
    story: 'Post-op on 2 L/min: SpO2 97 % then 95 %, flow unchanged: a 2-point drift is not a fall',
    pov: 'respiratory therapist', topic: 'class 10: rising need', age: 56, benign: true,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnFlow(97, 2, 150), ...spo2OnFlow(95, 2, 15), respRate(17), c.postOp()],
    }),
    expect: [silent('rising-oxygen-need', SRC.btsFall)],
  }),
  scenario({
    id: 'stable-flow-stable-spo2',
    story: 'Pneumonia on 2 L/min for 6 h, SpO2 95-96 % throughout',
    pov: 'pharmacist', topic: 'class 10: rising need', age: 63, benign: true,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnFlow(96, 2, 330), ...spo2OnFlow(95, 2, 200), ...spo2OnFlow(96, 2, 20), respRate(18), c.pneumonia()],
    }),
    expect: [silent('rising-oxygen-need', SRC.btsRising)],
  }),
  scenario({
    id: 'falling-flow-weaning',
    story: 'Pneumonia weaning: 6 -> 4 -> 2 L/min over 5 h with SpO2 95 %',
    pov: 'ward doctor', topic: 'class 10: rising need', age: 59, benign: true,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [...spo2OnFlow(95, 6, 300), ...spo2OnFlow(96, 4, 180), ...spo2OnFlow(95, 2, 20), respRate(17), c.pneumonia()],
    }),
    expect: [
      silent('rising-oxygen-need', SRC.btsRising),
      silent('order-gives-less-oxygen', `${SRC.btsWean}: SpO2 95 % is in range`),
    ],
  }),
  scenario({
    id: 'rising-flow-outside-window',
    story: 'Flow rose 2 -> 4 L/min eleven hours ago and has been steady since with SpO2 95 %',
    pov: 'respiratory therapist', topic: 'class 10: rising need', age: 68, benign: true,
    build: () => ({
      drafts: [serviceOrder('Oxygen 4 L/min via nasal cannula, target SpO2 94-98%')],
      record: [o2Flow(2, 720), o2Flow(4, 660), ...spo2OnFlow(95, 4, 200), ...spo2OnFlow(95, 4, 20), respRate(14), c.pneumonia()],
    }),
    expect: [silent('rising-oxygen-need', `${SRC.btsRising}; policy thresholds.oxygenNeedTrendMinutes 360`)],
  }),
  // --- less oxygen while SpO2 is below target ---------------------------------------------------
  scenario({
    id: 'reservoir-mask-running-draft-cannula-2-below',
    story: 'Pneumonia on a reservoir mask at 15 L/min (active order), SpO2 91 % (94-98 %); nasal cannula 2 L/min drafted',
    pov: 'ward doctor', topic: 'class 10: less oxygen below target', age: 66,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [onRecord(serviceOrder('Oxygen 15 L/min via reservoir mask, target SpO2 94-98%'), 240), spo2(91, 10), c.pneumonia()],
    }),
    expect: [
      // 3 points below 94 %: a warning; critical only below 85 % or more than 4 points below (BTS 2017, Table 2; local choice)
      fires('order-gives-less-oxygen', 'warning', `${SRC.btsWean}; ${SRC.btsFall}`),
      fires('spo2-below-target', 'critical', 'BTS 2017 summary: below the target range calls for reassessment; already on a reservoir mask'),
    ],
  }),
  scenario({
    id: 'charted-fio2-60-draft-cannula-2-below',
    story: 'Pneumonia, FiO2 0.60 charted with SpO2 91 % (94-98 %), no order on record; nasal cannula 2 L/min drafted',
    pov: 'respiratory therapist', topic: 'class 10: less oxygen below target', age: 66,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(91, 10), fio2Percent(60, 10), c.pneumonia()],
    }),
    expect: [
      // Nasal cannula 2 L/min about FiO2 0.28 (check-values.md §2a, rule of 4, common practice) against 0.60 charted
      fires('order-gives-less-oxygen', 'warning', `${SRC.btsWean}; ${SRC.btsFall}`),
    ],
  }),
  scenario({
    id: 'cannula-2-drafted-on-fio2-60-and-15-l-below',
    story: 'Pneumonia, FiO2 0.60 and 15 L/min charted, SpO2 93 % (94-98 %), RR 26, PaO2 7.9 kPa; nasal cannula 2 L/min drafted',
    pov: 'pharmacist', topic: 'class 10: less oxygen below target', age: 66,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%')],
      record: [
        spo2(93, 10),
        respRate(26, 10),
        fio2Percent(60, 10),
        o2Flow(15, 10),
        ...bloodGas({ ph: 7.44, pco2: 4.6, po2: 7.9, hco3: 24, minutesAgo: 30 }),
        c.pneumonia(),
      ],
    }),
    expect: [
      // FiO2 0.60 charted is far above what a nasal cannula at 2 L/min gives (check-values.md §2a, common practice)
      fires('order-gives-less-oxygen', 'warning', `${SRC.btsWean}; ${SRC.btsFall}`),
    ],
  }),
];
