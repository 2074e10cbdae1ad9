export { buildAssessment, estimateOrderDelivery, siteBarometricPressure } from './build-assessment.js';
export { pickCurrentValues, isWithin, newestFirst } from './current-values.js';
export { fio2InForceAt } from './fio2-in-force.js';
export { assessHypercapnicRisk } from './hypercapnic-risk.js';
export { classifyHypercapnia, readCompensation } from './hypercapnia-classification.js';
export { assessPopulation } from './population.js';
export { compareOrderedTarget, selectTarget, selectTitrationTarget } from './target-selection.js';
export type * from './types.js';
