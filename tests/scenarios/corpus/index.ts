import type { Scenario } from '../support/scenario.js';
import { BENIGN } from './benign.js';
import { CLASSIC } from './classic.js';
import { ESCALATION } from './escalation.js';
import { GAS_AND_HYPERCAPNIA } from './gas-and-hypercapnia.js';
import { INDICATION_AND_PURPOSE } from './indication-and-purpose.js';
import { ORDER_SELECT } from './order-select.js';
import { PATIENT_VIEW } from './patient-view.js';
import { PATIENT_VIEW_CLASSES } from './patient-view-classes.js';
import { TARGETS_AND_TEXT } from './targets-and-text.js';

/** Every scenario of the corpus, file by file. */
export const CORPUS: readonly Scenario[] = [
  ...BENIGN,
  ...GAS_AND_HYPERCAPNIA,
  ...ESCALATION,
  ...TARGETS_AND_TEXT,
  ...INDICATION_AND_PURPOSE,
  ...CLASSIC,
  ...ORDER_SELECT,
  ...PATIENT_VIEW,
  ...PATIENT_VIEW_CLASSES,
];
