import * as c from '../support/clinical.js';
import { SRC } from '../support/clinical.js';
import { bloodGas, medicationOrder, respRate, serviceOrder, spo2, spo2OnFlow } from '../support/fhir.js';
import {
  fires,
  scenario,
  silent,
  suggestionsKeep,
  suggestionsLose,
  type Scenario,
} from '../support/scenario.js';

/**
 * Issue 6 classes 5 (targets as prescribers write them) and 6 (a one-click fix changes only what
 * it says).
 */

const notation = 'class 5: target notation';

/** A COPD patient at target, the 88-92 % range written in `words`: read as 88-92 %, nothing to say. */
const copdRangeWritten = (id: string, words: string, pov: Scenario['pov']): Scenario =>
  scenario({
    id,
    story: `COPD on 24 % Venturi, SpO2 90 %, target written "${words}"`,
    pov, topic: notation, age: 70, benign: true,
    build: () => ({
      drafts: [serviceOrder(`Venturi 24% at 2 L/min, ${words}`)],
      record: [spo2(90), respRate(18), c.copd()],
    }),
    expect: [
      silent('target-range-missing', `${SRC.btsRange}; every notation of 88-92 % is the same range`),
      silent('target-one-sided', SRC.btsRange),
      silent('target-ambiguous', SRC.btsRange),
      silent('target-above-hypercapnic-range', SRC.btsT4),
    ],
  });

/** A one-sided target: read as that bound, advise a full range. */
const oneSided = (id: string, words: string, pov: Scenario['pov'], spo2Now: number): Scenario =>
  scenario({
    id,
    story: `Pneumonia on 2 L/min, SpO2 ${spo2Now} %, target written "${words}"`,
    pov, topic: notation, age: 62,
    build: () => ({
      drafts: [serviceOrder(`Oxygen 2 L/min via nasal cannula, ${words}`)],
      record: [spo2(spo2Now), respRate(18), c.pneumonia()],
    }),
    expect: [
      fires('target-one-sided', 'warning', SRC.btsRange),
      silent('target-range-missing', `${SRC.btsRange}: a bound was written, it is not missing`),
    ],
  });

/** Two ranges or a condition: ambiguous; say so and still run the hypercapnic-risk check. */
const ambiguous = (id: string, words: string, pov: Scenario['pov']): Scenario =>
  scenario({
    id,
    story: `COPD on 1 L/min nasal cannula, SpO2 90 %, target written "${words}"`,
    pov, topic: notation, age: 74,
    build: () => ({
      drafts: [serviceOrder(`Oxygen 1 L/min via nasal cannula, ${words}`)],
      record: [spo2(90), respRate(20), c.copd()],
    }),
    expect: [
      fires('target-ambiguous', 'warning', `${SRC.btsRange}: one range, not two`),
      silent('target-range-missing', SRC.btsRange),
    ],
  });

export const TARGETS_AND_TEXT: readonly Scenario[] = [
  copdRangeWritten('notation-to', 'target SpO2 88 to 92%', 'ward doctor'),
  copdRangeWritten('notation-between-words', 'keep saturations between 88 and 92 percent', 'pharmacist'),
  copdRangeWritten('notation-en-dash', 'target SpO2 88–92 %', 'respiratory therapist'),
  copdRangeWritten('notation-em-dash', 'target SpO2 88—92%', 'ward doctor'),
  copdRangeWritten('notation-minus-sign', 'target SpO2 88−92%', 'pharmacist'),
  copdRangeWritten('notation-spaced-hyphen', 'sats 88 - 92 %', 'respiratory therapist'),
  copdRangeWritten('notation-no-percent', 'aim SpO2 88-92', 'ward doctor'),
  copdRangeWritten('notation-fractions', 'target SpO2 0.88-0.92', 'respiratory therapist'),
  copdRangeWritten('notation-fractions-to', 'aim sats .88 to .92', 'ward doctor'),
  oneSided('one-value-target-94', 'target SpO2 94%', 'ward doctor', 96),
  oneSided('one-value-aim-sats', 'aim sats 95', 'pharmacist', 96),
  scenario({
    id: 'one-value-replaced-not-appended',
    story: 'Pneumonia on 2 L/min nasal cannulae, target written as one value "target SpO2 94%"',
    pov: 'ward doctor', topic: notation, age: 58,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min nasal cannulae, target SpO2 94%')],
      record: [spo2(95), respRate(17), c.pneumonia()],
    }),
    expect: [
      fires('target-one-sided', 'warning', SRC.btsRange),
      silent('target-range-missing', `${SRC.btsRange}: a value was written, it is not missing`),
      suggestionsKeep('target SpO2 94-98%', `BTS 2017, Tables 1-3; ${SRC.cdsOnly}`),
      suggestionsLose('Target SpO2 94-98%.', 'common practice: one target in an order, not a second one appended'),
    ],
  }),
  scenario({
    id: 'device-np-at-target',
    story: 'Pneumonia on 2 L/min "via NP" (nasal prongs), SpO2 95 %, target 94-98 %',
    pov: 'respiratory therapist', topic: notation, age: 61, benign: true,
    build: () => ({
      drafts: [serviceOrder('O2 2L via NP, target SpO2 94-98%')],
      record: [spo2(95), respRate(16), c.pneumonia()],
    }),
    expect: [
      silent('data-set-aside', 'common practice: "NP" in a device position is nasal prongs, a nasal cannula'),
      silent('flow-outside-device-range', SRC.cannula),
    ],
  }),
  scenario({
    id: 'device-np-8l',
    story: 'Pneumonia on 8 L/min "via NP": above the usual nasal cannula flows',
    pov: 'ward doctor', topic: notation, age: 64,
    build: () => ({
      drafts: [serviceOrder('O2 8L via NP, target SpO2 94-98%')],
      record: [spo2(95), respRate(20), c.pneumonia()],
    }),
    expect: [
      fires('flow-outside-device-range', 'warning', `${SRC.cannula}; common practice: NP is nasal prongs`),
    ],
  }),
  scenario({
    id: 'device-named-not-recognised',
    story: 'Pneumonia on 2 L/min "via wallbox": a device word the service does not know',
    pov: 'pharmacist', topic: notation, age: 55,
    build: () => ({
      drafts: [serviceOrder('O2 2L via wallbox, target SpO2 94-98%')],
      record: [spo2(95), respRate(16), c.pneumonia()],
    }),
    expect: [
      fires('data-set-aside', 'info', 'common practice: a check skipped for want of data is stated, so no card is not read as approval'),
    ],
  }),
  oneSided('one-sided-greater-than', 'SpO2 > 94%', 'ward doctor', 96),
  oneSided('one-sided-keep-above', 'keep sats above 92', 'respiratory therapist', 95),
  oneSided('one-sided-at-least-symbol', 'target SpO2 ≥ 92 %', 'pharmacist', 95),
  oneSided('one-sided-at-least-words', 'SpO2 at least 94%', 'ward doctor', 96),
  ambiguous('ambiguous-if-drowsy', 'target 88–92 % if drowsy, otherwise 94–98 %', 'respiratory therapist'),
  ambiguous('ambiguous-until-gas', 'target 94–98 % until the gas is back', 'pharmacist'),
  ambiguous('ambiguous-two-ranges', 'target SpO2 88-92% / 94-98% once ABG normal', 'ward doctor'),
  scenario({
    id: 'ambiguous-still-checks-hypercapnia',
    story: 'COPD with PaCO2 7.4 kPa, "94-98 % unless drowsy, then 88-92 %": ambiguous, and the hypercapnic risk still stated',
    pov: 'respiratory therapist', topic: notation, age: 69,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min nasal cannula, target 94-98% unless drowsy, then 88-92%')],
      record: [spo2(93), respRate(22), c.copd(), bloodGas({ ph: 7.37, pco2: 7.4, po2: 8.4, hco3: 32 })],
    }),
    expect: [
      fires('target-ambiguous', 'warning', SRC.btsRange),
      silent('target-range-missing', SRC.btsRange),
    ],
  }),

  // --- class 6: a one-click fix changes only what it says ---------------------------------------
  scenario({
    id: 'reduce-flow-keeps-contingency',
    story: 'Pneumonia, SpO2 99 % on 4 L/min; order says "if SpO2 below 85% call doctor, increase to 6 L/min"',
    pov: 'ward doctor', topic: 'class 6: text rewriting', age: 57,
    build: () => ({
      drafts: [serviceOrder('Oxygen 4 L/min via nasal cannula, target SpO2 94-98%. If SpO2 below 85% call doctor, increase to 6 L/min')],
      record: [...spo2OnFlow(99, 4), respRate(16), c.pneumonia()],
    }),
    expect: [
      fires('spo2-above-target', 'info', `${SRC.btsTables}; BMJ 2018 (SpO2 <= 96 %)`),
      suggestionsKeep('increase to 6 L/min', SRC.cdsOnly),
      suggestionsKeep('If SpO2 below 85% call doctor', SRC.cdsOnly),
    ],
  }),
  scenario({
    id: 'target-change-keeps-drowsy-instruction',
    story: 'COPD with PaCO2 7.1 kPa, 94-98 % ordered with "if drowsy call the registrar"',
    pov: 'pharmacist', topic: 'class 6: text rewriting', age: 71,
    build: () => ({
      drafts: [serviceOrder('Oxygen 1 L/min via nasal cannula, target SpO2 94-98%; if drowsy call the registrar')],
      record: [spo2(94), respRate(20), c.copd(), bloodGas({ ph: 7.38, pco2: 7.1, po2: 8.7, hco3: 31 })],
    }),
    expect: [
      fires('target-above-hypercapnic-range', 'critical', `${SRC.btsT4}; ${SRC.btsHypercapnia}`),
      suggestionsKeep('if drowsy call the registrar', SRC.cdsOnly),
      suggestionsLose('94-98%', 'common practice: no stale target left in the suggested order'),
    ],
  }),
  scenario({
    id: 'add-target-keeps-outreach-call',
    story: 'COPD, nasal cannula 2 L/min with no target but "call outreach if SpO2 below 85%"',
    pov: 'ward doctor', topic: 'class 6: text rewriting', age: 66,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula. Call outreach if SpO2 below 85%')],
      record: [spo2(90), respRate(18), c.copd()],
    }),
    expect: [
      fires('target-range-missing', 'warning', SRC.btsRange),
      suggestionsKeep('Call outreach if SpO2 below 85%', SRC.cdsOnly),
    ],
  }),
  scenario({
    id: 'target-change-updates-medication-text',
    story: 'COPD with PaCO2 7.6 kPa; the oxygen medicine order reads "target SpO2 94-98%" in its dosage text and a note',
    pov: 'pharmacist', topic: 'class 6: text rewriting', age: 75,
    build: () => {
      const order = medicationOrder('Oxygen 2 L/min via nasal cannula, target SpO2 94-98%', { method: 'Nasal cannula', flowLPerMin: 2 });
      return {
        drafts: [{ ...order, note: [{ text: 'Target SpO2 94-98% per admitting team' }] }],
        record: [spo2(95), respRate(21), c.copd(), bloodGas({ ph: 7.36, pco2: 7.6, po2: 9.0, hco3: 33 })],
      };
    },
    expect: [
      fires('target-above-hypercapnic-range', 'critical', `${SRC.btsT4}; ${SRC.btsHypercapnia}`),
      suggestionsLose('94-98', 'issue 6 class 6: every place that states the old value changes with it (common practice)'),
    ],
  }),
  scenario({
    id: 'reduce-flow-keeps-second-flow-figure',
    story: 'Sepsis, SpO2 99 % on 3 L/min; order reads "3 L/min, may increase to 4 L/min overnight"',
    pov: 'respiratory therapist', topic: 'class 6: text rewriting', age: 69,
    build: () => ({
      drafts: [serviceOrder('Oxygen 3 L/min via nasal cannula, may increase to 4 L/min overnight, target SpO2 94-98%')],
      record: [...spo2OnFlow(99, 3), respRate(15), c.sepsis()],
    }),
    expect: [suggestionsKeep('may increase to 4 L/min overnight', SRC.cdsOnly)],
  }),
  scenario({
    id: 'no-target-text-not-appended',
    story: 'Pneumonia, order text already says "target per respiratory team (see plan)", coded target absent',
    pov: 'ward doctor', topic: 'class 6: text rewriting', age: 60,
    build: () => ({
      drafts: [serviceOrder('Oxygen 2 L/min via nasal cannula; target per respiratory team (see plan)')],
      record: [spo2(95), respRate(18), c.pneumonia()],
    }),
    expect: [suggestionsKeep('target per respiratory team (see plan)', SRC.cdsOnly)],
  }),
];
