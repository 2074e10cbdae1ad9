import * as c from '../support/clinical.js';
import { SRC } from '../support/clinical.js';
import { bloodGas, medicationOrder, respRate, serviceOrder, spo2 } from '../support/fhir.js';
import { fires, neverSays, noLessOxygen, once, scenario, silent, type Scenario } from '../support/scenario.js';

/**
 * Issue 6 classes 1 (one gas filed as several results), 2 (acute, acute-on-chronic and compensated
 * hypercapnia told apart) and 11 (NEWS2 Scale 2 where hypercapnia is confirmed).
 */

const acidoticCopdGas = { ph: 7.28, pco2: 8.1, po2: 7.4, hco3: 31 } as const;

const gasFiling = (
  id: string,
  story: string,
  pov: Scenario['pov'],
  filing: 'spread' | 'issued' | 'specimen' | 'panel',
  spreadSeconds: number,
): Scenario =>
  scenario({
    id,
    story,
    pov,
    topic: 'class 1: gas filed in pieces',
    age: 69,
    build: () => ({
      drafts: [serviceOrder('Venturi 28% at 4 L/min, target SpO2 88-92%')],
      record: [spo2(87), respRate(26), c.copd(), bloodGas({ ...acidoticCopdGas, filing, spreadSeconds })],
    }),
    expect: [
      fires('acute-hypercapnic-acidosis', 'critical', `${SRC.btsIcs}; ${SRC.grouping}`),
      noLessOxygen(SRC.btsT4),
    ],
  });

export const GAS_AND_HYPERCAPNIA: readonly Scenario[] = [
  // --- class 1 -------------------------------------------------------------------------------
  gasFiling('gas-pieces-90-seconds-apart', 'COPD: pH 7.28 and PaCO2 8.1 kPa of one sample filed 90 s apart', 'ward doctor', 'spread', 90),
  gasFiling('gas-pieces-4-minutes-apart', 'COPD: results of one gas filed 4 min apart, pH first, PCO2 last', 'respiratory therapist', 'spread', 240),
  gasFiling('gas-pieces-same-time-different-issued', 'COPD: one gas, same effective time, results issued minutes apart', 'pharmacist', 'issued', 200),
  gasFiling('gas-pieces-linked-by-specimen', 'COPD: one gas, results filed 3 min apart, linked by Observation.specimen', 'respiratory therapist', 'specimen', 180),
  gasFiling('gas-pieces-linked-by-panel', 'COPD: one gas as a 24336-0 panel whose members were filed 1.5 min apart', 'ward doctor', 'panel', 90),
  scenario({
    id: 'gas-pieces-mmhg-spread',
    story: 'Kyphoscoliosis: gas in mmHg (pH 7.30, PaCO2 62 mmHg) filed 2 min apart, 94-98 % ordered on 4 L/min',
    pov: 'pharmacist', topic: 'class 1: gas filed in pieces', age: 61,
    build: () => ({
      drafts: [medicationOrder('Oxygen 4 L/min nasal cannula, target SpO2 94-98%', { method: 'Nasal cannula', flowLPerMin: 4 })],
      record: [spo2(93), respRate(24), c.kyphoscoliosis(), bloodGas({ ph: 7.3, pco2: 62, po2: 58, hco3: 29, unit: 'mm[Hg]', filing: 'spread', spreadSeconds: 120 })],
    }),
    expect: [
      fires('acute-hypercapnic-acidosis', 'critical', `${SRC.btsIcs}; ${SRC.grouping}`),
      fires('target-above-hypercapnic-range', 'critical', `${SRC.btsT4}; ${SRC.btsHypercapnia}`),
    ],
  }),
  scenario({
    id: 'gas-pieces-later-pao2-alone',
    story: 'COPD: pH 7.27 and PaCO2 8.4 filed together, the PaO2 of the same sample filed 6 min later',
    pov: 'ward doctor', topic: 'class 1: gas filed in pieces', age: 75,
    build: () => ({
      drafts: [serviceOrder('Venturi 24% at 2 L/min, target SpO2 88-92%')],
      record: [
        spo2(86), respRate(27), c.copd(),
        bloodGas({ ph: 7.27, pco2: 8.4, hco3: 32, minutesAgo: 46 }),
        bloodGas({ po2: 6.9, minutesAgo: 40 }),
      ],
    }),
    expect: [fires('acute-hypercapnic-acidosis', 'critical', `${SRC.btsIcs}; ${SRC.grouping}`)],
  }),
  scenario({
    id: 'gas-older-acidotic-newer-compensated',
    story: 'COPD: an acidotic gas 4 h ago (pH 7.29), the repeat now compensated (pH 7.37, PaCO2 6.9)',
    pov: 'respiratory therapist', topic: 'class 1: gas filed in pieces', age: 72, benign: true,
    build: () => ({
      drafts: [serviceOrder('Venturi 24% at 2 L/min, target SpO2 88-92%')],
      record: [
        spo2(90), respRate(19), c.copd(),
        bloodGas({ ph: 7.29, pco2: 7.9, po2: 7.2, hco3: 31, minutesAgo: 240 }),
        bloodGas({ ph: 7.37, pco2: 6.9, po2: 8.0, hco3: 31, minutesAgo: 30, filing: 'spread', spreadSeconds: 60 }),
      ],
    }),
    expect: [silent('acute-hypercapnic-acidosis', SRC.compensated)],
  }),

  // --- class 2: acute hypercapnia without chronic retention ------------------------------------
  scenario({
    id: 'asthma-rising-paco2-reservoir',
    story: 'Acute severe asthma, tiring: pH 7.31, PaCO2 6.4 kPa, RR 32, reservoir mask 15 L/min, 94-98 %, SpO2 93 %',
    pov: 'ward doctor', topic: 'class 2: acute hypercapnia', age: 24,
    build: () => ({
      drafts: [serviceOrder('Oxygen 15 L/min via non-rebreather mask, target SpO2 94-98%')],
      record: [spo2(93), respRate(32), c.acuteAsthma(), bloodGas({ ph: 7.31, pco2: 6.4, po2: 9.1, hco3: 24 })],
    }),
    expect: [
      fires('hypercapnia-without-chronic-retention', 'critical', SRC.asthma),
      silent('target-above-hypercapnic-range', SRC.asthma),
      silent('uncontrolled-oxygen-at-risk', SRC.asthma),
      noLessOxygen(SRC.asthma),
      neverSays(/88–92 % advised/, SRC.asthma),
      neverSays(/under-?breathing|hypoventilat/i, `${SRC.asthma} (RR 32/min is not under-breathing)`),
    ],
  }),
  scenario({
    id: 'asthma-normalising-paco2-cannula',
    story: 'Acute asthma, PaCO2 6.1 kPa pH 7.33 after nebulisers, nasal cannula 4 L/min, 94-98 %, SpO2 94 %',
    pov: 'respiratory therapist', topic: 'class 2: acute hypercapnia', age: 31,
    build: () => ({
      drafts: [serviceOrder('Oxygen 4 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(94), respRate(28), c.acuteAsthma(), bloodGas({ ph: 7.33, pco2: 6.1, po2: 9.6, hco3: 23 })],
    }),
    expect: [
      fires('hypercapnia-without-chronic-retention', 'critical', SRC.asthma),
      silent('target-above-hypercapnic-range', SRC.asthma),
      noLessOxygen(SRC.asthma),
    ],
  }),
  scenario({
    id: 'opioid-toxicity-acidosis',
    story: 'Opioid toxicity: RR 7, pH 7.24, PaCO2 8.9 kPa, HCO3 25, face mask 6 L/min, 94-98 %, SpO2 95 %',
    pov: 'pharmacist', topic: 'class 2: acute hypercapnia', age: 46,
    build: () => ({
      drafts: [serviceOrder('Oxygen 6 L/min via simple face mask, target SpO2 94-98%')],
      record: [spo2(95), respRate(7), c.opioidToxicity(), bloodGas({ ph: 7.24, pco2: 8.9, po2: 12.1, hco3: 25 })],
    }),
    expect: [
      fires('hypercapnia-without-chronic-retention', 'critical', `${SRC.poisoning}; ${SRC.btsIcsInvasive}`),
      silent('target-above-hypercapnic-range', SRC.poisoning),
      noLessOxygen(SRC.poisoning),
      neverSays(/88–92 % advised/, SRC.poisoning),
    ],
  }),
  scenario({
    id: 'sedative-overdose-hypercapnia',
    story: 'Benzodiazepine overdose, drowsy, pH 7.30, PaCO2 7.2 kPa, HCO3 24, nasal cannula 2 L/min, 94-98 %, SpO2 96 %',
    pov: 'pharmacist', topic: 'class 2: acute hypercapnia', age: 38,
    build: () => ({
      drafts: [medicationOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%', { method: 'Nasal cannula', flowLPerMin: 2 })],
      record: [spo2(96), respRate(9), c.benzodiazepineOverdose(), bloodGas({ ph: 7.3, pco2: 7.2, po2: 11.0, hco3: 24 })],
    }),
    expect: [
      fires('hypercapnia-without-chronic-retention', 'critical', SRC.poisoning),
      silent('target-above-hypercapnic-range', SRC.poisoning),
    ],
  }),
  scenario({
    id: 'exhausted-pneumonia-hypercapnia',
    story: 'Pneumonia, no lung disease, exhausted: RR 36, pH 7.29, PaCO2 7.0 kPa, HCO3 24, reservoir mask, SpO2 92 %',
    pov: 'ward doctor', topic: 'class 2: acute hypercapnia', age: 58,
    build: () => ({
      drafts: [serviceOrder('Reservoir mask 15 L/min, target SpO2 94-98%')],
      record: [spo2(92), respRate(36), c.pneumonia(), bloodGas({ ph: 7.29, pco2: 7.0, po2: 8.2, hco3: 24 })],
    }),
    expect: [
      fires('hypercapnia-without-chronic-retention', 'critical', `${SRC.btsIcs} (from memory: a rising PaCO2 in a tiring patient needs critical-care review)`),
      noLessOxygen(SRC.btsT2),
      neverSays(/under-?breathing/i, 'common practice: RR 36/min is not under-breathing'),
    ],
  }),
  scenario({
    id: 'copd-acute-on-chronic-88-92',
    story: 'COPD, acute-on-chronic: pH 7.29, PaCO2 8.4 kPa, HCO3 33, 28 % Venturi, 88-92 %, SpO2 88 %',
    pov: 'respiratory therapist', topic: 'class 2: acute-on-chronic', age: 67,
    build: () => ({
      drafts: [serviceOrder('Venturi 28% at 4 L/min, target SpO2 88-92%')],
      record: [spo2(88), respRate(25), c.copd(), bloodGas({ ph: 7.29, pco2: 8.4, po2: 7.3, hco3: 33 })],
    }),
    expect: [
      fires('acute-hypercapnic-acidosis', 'critical', SRC.btsIcs),
      silent('hypercapnia-without-chronic-retention', `${SRC.btsT4}: COPD is chronic risk, not this class`),
      noLessOxygen(SRC.btsT4),
    ],
  }),
  scenario({
    id: 'copd-acute-on-chronic-94-98-ordered',
    story: 'COPD, pH 7.30 and PaCO2 7.8 kPa, but nasal cannula 4 L/min with 94-98 % ordered, SpO2 95 %',
    pov: 'ward doctor', topic: 'class 2: acute-on-chronic', age: 78,
    build: () => ({
      drafts: [serviceOrder('Oxygen 4 L/min via nasal cannula, target SpO2 94-98%')],
      record: [spo2(95), respRate(24), c.copd(), bloodGas({ ph: 7.3, pco2: 7.8, po2: 9.9, hco3: 30 })],
    }),
    expect: [
      fires('acute-hypercapnic-acidosis', 'critical', SRC.btsIcs),
      fires('target-above-hypercapnic-range', 'critical', `${SRC.btsT4}; ${SRC.btsHypercapnia}`),
    ],
  }),
  scenario({
    id: 'copd-ph-below-7-25',
    story: 'COPD, pH 7.21, PaCO2 10.2 kPa on 24 % Venturi, 88-92 %, SpO2 86 %',
    pov: 'respiratory therapist', topic: 'class 2: acute-on-chronic', age: 70,
    build: () => ({
      drafts: [serviceOrder('Venturi 24% 2 L/min, target SpO2 88-92%')],
      record: [spo2(86), respRate(30), c.copd(), bloodGas({ ph: 7.21, pco2: 10.2, po2: 7.0, hco3: 30 })],
    }),
    expect: [fires('acute-hypercapnic-acidosis', 'critical', SRC.btsIcsInvasive), noLessOxygen(SRC.btsT4)],
  }),
  scenario({
    id: 'compensated-retainer-at-target',
    story: 'COPD retainer, compensated (pH 7.38, PaCO2 7.2, HCO3 32), 28 % Venturi, 88-92 %, SpO2 90 %',
    pov: 'ward doctor', topic: 'class 2: compensated', age: 73, benign: true,
    build: () => ({
      drafts: [serviceOrder('Venturi 28% at 4 L/min, target SpO2 88-92%')],
      record: [spo2(90), respRate(20), c.copd(), bloodGas({ ph: 7.38, pco2: 7.2, po2: 7.8, hco3: 32 })],
    }),
    expect: [
      silent('acute-hypercapnic-acidosis', SRC.compensated),
      silent('hypercapnia-without-chronic-retention', SRC.compensated),
      fires('news2-scale-2', 'info', SRC.news2),
    ],
  }),
  scenario({
    id: 'compensated-retainer-94-98-ordered',
    story: 'COPD retainer, compensated (pH 7.37, PaCO2 7.0), nasal cannula 2 L/min with 94-98 % ordered, SpO2 94 %',
    pov: 'pharmacist', topic: 'class 2: compensated', age: 66,
    build: () => ({
      drafts: [medicationOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%', { method: 'Nasal cannula', flowLPerMin: 2 })],
      record: [spo2(94), respRate(20), c.copd(), bloodGas({ ph: 7.37, pco2: 7.0, po2: 8.8, hco3: 31 })],
    }),
    expect: [
      fires('target-above-hypercapnic-range', 'critical', `${SRC.btsT4}; ${SRC.btsHypercapnia}`),
      silent('acute-hypercapnic-acidosis', SRC.compensated),
    ],
  }),
  scenario({
    id: 'ohs-compensated-bicarbonate',
    story: 'Obesity hypoventilation, pH 7.36, PaCO2 6.9, HCO3 33, nasal cannula 1 L/min, 88-92 %, SpO2 89 %',
    pov: 'respiratory therapist', topic: 'class 2: compensated', age: 57, benign: true,
    build: () => ({
      drafts: [serviceOrder('Nasal cannula 1 L/min, target SpO2 88-92%')],
      record: [spo2(89), respRate(18), c.obesityHypoventilation(), bloodGas({ ph: 7.36, pco2: 6.9, po2: 7.9, hco3: 33 })],
    }),
    expect: [silent('acute-hypercapnic-acidosis', SRC.compensated), fires('news2-scale-2', 'info', SRC.news2)],
  }),

  // --- class 11: NEWS2 Scale 2 -------------------------------------------------------------------
  scenario({
    id: 'news2-scale-2-kyphoscoliosis-hypercapnic',
    story: 'Kyphoscoliosis with PaCO2 6.8 kPa, pH 7.36, nasal cannula 1 L/min, 88-92 %, SpO2 90 %',
    pov: 'ward doctor', topic: 'class 11: NEWS2 scale', age: 64, benign: true,
    build: () => ({
      drafts: [serviceOrder('Nasal cannula 1 L/min, target SpO2 88-92%')],
      record: [spo2(90), respRate(18), c.kyphoscoliosis(), bloodGas({ ph: 7.36, pco2: 6.8, po2: 8.1, hco3: 30 })],
    }),
    expect: [fires('news2-scale-2', 'info', SRC.news2)],
  }),
  scenario({
    id: 'news2-scale-2-acidotic-copd',
    story: 'COPD with hypercapnic acidosis on 24 % Venturi, 88-92 %: the reminder still applies, once',
    pov: 'respiratory therapist', topic: 'class 11: NEWS2 scale', age: 71,
    build: () => ({
      drafts: [serviceOrder('Venturi 24% at 2 L/min, target SpO2 88-92%')],
      record: [spo2(89), respRate(24), c.copd(), bloodGas({ ph: 7.32, pco2: 7.6, po2: 7.5, hco3: 30 })],
    }),
    expect: [
      fires('acute-hypercapnic-acidosis', 'critical', SRC.btsIcs),
      fires('news2-scale-2', 'info', SRC.news2),
      once('news2-scale-2', 'common practice: one reminder per call'),
    ],
  }),
  scenario({
    id: 'news2-scale-1-copd-normal-gas',
    story: 'COPD with a normal gas (PaCO2 5.2 kPa) and 88-92 % ordered: Scale 1 applies, no Scale 2 reminder',
    pov: 'pharmacist', topic: 'class 11: NEWS2 scale', age: 65,
    build: () => ({
      drafts: [serviceOrder('Venturi 24% at 2 L/min, target SpO2 88-92%')],
      record: [spo2(91), respRate(18), c.copd(), bloodGas({ ph: 7.42, pco2: 5.2, po2: 8.6, hco3: 25 })],
    }),
    expect: [
      silent('news2-scale-2', SRC.news2Scale1),
      fires('lower-range-without-risk', 'warning', `${SRC.btsTables}: re-target to 94-98 % once PaCO2 is normal, no previous NIV`),
    ],
  }),
  scenario({
    id: 'news2-scale-1-copd-no-gas',
    story: 'COPD, no gas yet, 24 % Venturi with 88-92 %, SpO2 90 %: hypercapnia not confirmed, no Scale 2 reminder',
    pov: 'ward doctor', topic: 'class 11: NEWS2 scale', age: 69, benign: true,
    build: () => ({
      drafts: [serviceOrder('Venturi 24% at 2 L/min, target SpO2 88-92%')],
      record: [spo2(90), respRate(18), c.copd()],
    }),
    expect: [silent('news2-scale-2', SRC.news2Scale1)],
  }),
  scenario({
    id: 'news2-scale-1-standard-range',
    story: 'Pneumonia on 94-98 %: no Scale 2 reminder',
    pov: 'respiratory therapist', topic: 'class 11: NEWS2 scale', age: 54, benign: true,
    build: () => ({
      drafts: [serviceOrder('Nasal cannula 2 L/min, target SpO2 94-98%')],
      record: [spo2(96), respRate(18), c.pneumonia()],
    }),
    expect: [silent('news2-scale-2', SRC.news2Scale1)],
  }),
  scenario({
    id: 'news2-scale-1-asthma-hypercapnia',
    story: 'Acute asthma with PaCO2 6.3 kPa on 94-98 %: acute hypercapnia, not Scale 2',
    pov: 'ward doctor', topic: 'class 11: NEWS2 scale', age: 29,
    build: () => ({
      drafts: [serviceOrder('Oxygen 6 L/min via simple face mask, target SpO2 94-98%')],
      record: [spo2(95), respRate(30), c.acuteAsthma(), bloodGas({ ph: 7.33, pco2: 6.3, po2: 10.2, hco3: 23 })],
    }),
    expect: [silent('news2-scale-2', `${SRC.news2}; the range here is 94-98 %`), fires('hypercapnia-without-chronic-retention', 'critical', SRC.asthma)],
  }),
];
