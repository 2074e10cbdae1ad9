export { auditPatient, stayInPeriod } from './audit-patient.js';
export { ALL_WARDS, auditPatients, auditWards, exportPeriod, percentOf, wardFigures } from './audit-wards.js';
export type * from './types.js';
