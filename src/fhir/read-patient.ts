import type { SetAsideNote } from '../core/types.js';
import { parseFhirDateTime } from './fhir-date.js';
import type { FhirResource } from './gathered-data.js';
import { stringAt } from './json.js';

/**
 * Age in whole years from `Patient.birthDate` at `now`. A partial date (YYYY or YYYY-MM) is read as
 * the last day it could be, so the age is the one the patient has certainly reached: born "1950"
 * is 75 on 2026-06-15 (they may be 76). The one-year uncertainty is smaller than any age step the
 * physiology uses (the expected A-a gradient rises 1 mmHg per 4 years).
 */
export function ageInYears(birthDate: unknown, now: Date): number | undefined {
  const parsed = parseFhirDateTime(birthDate);
  if (parsed === undefined) {
    return undefined;
  }
  const born = new Date(parsed.precision === 'time' ? parsed.startMs : parsed.endMs);
  const y = now.getUTCFullYear() - born.getUTCFullYear();
  const beforeBirthday =
    now.getUTCMonth() < born.getUTCMonth() ||
    (now.getUTCMonth() === born.getUTCMonth() && now.getUTCDate() < born.getUTCDate());
  const age = beforeBirthday ? y - 1 : y;
  return age >= 0 ? age : undefined;
}

export interface PatientRead {
  readonly ageYears: number | undefined;
  readonly notes: readonly SetAsideNote[];
}

export function readPatient(patient: FhirResource | undefined, now: Date): PatientRead {
  if (patient === undefined || patient.resourceType !== 'Patient') {
    return { ageYears: undefined, notes: [] };
  }
  const birthDate = stringAt(patient, 'birthDate');
  if (birthDate === undefined) {
    return { ageYears: undefined, notes: [] };
  }
  const ageYears = ageInYears(birthDate, now);
  const reference = patient.id === undefined ? undefined : `Patient/${patient.id}`;
  if (ageYears === undefined) {
    const detail = `Birth date '${birthDate.slice(0, 40)}' is not a date on or before today.`;
    return { ageYears, notes: [{ what: 'Age', reason: 'implausible', detail, reference }] };
  }
  return { ageYears, notes: [] };
}
