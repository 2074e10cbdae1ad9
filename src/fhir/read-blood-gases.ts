import type { BloodGas } from '../core/types.js';
import type { GasField, Specimen } from './codes.js';
import type { Reading } from './read-observation-values.js';

/**
 * Groups blood gas readings into samples. Values belong to one sample when a panel lists them in
 * `hasMember`, when they name the same specimen, or else when they share an effective time (labs
 * stamp every value of one gas with the collection time). Arterial and venous values at the same
 * time are kept as two samples; values whose code names no specimen (serum HCO3, blood base excess,
 * blood pCO2) join the arterial one.
 */

export interface GasSample {
  readonly gas: BloodGas;
  readonly atMs: number;
  /** The reference of one member, for notes. */
  readonly reference: string | undefined;
}

const REPORTED_KEY: Readonly<Record<GasField, string>> = {
  ph: 'ph',
  po2: 'pao2',
  pco2: 'paco2',
  hco3: 'hco3',
  baseExcess: 'baseExcess',
};

function specimenOf(reading: Reading): Specimen {
  return reading.code.kind === 'gas' ? reading.code.specimen : 'unknown';
}

function buildSample(readings: readonly Reading[], specimen: Specimen): GasSample {
  const values: Partial<Record<GasField, number>> = {};
  const reported: Record<string, { readonly value: number; readonly unit: string }> = {};
  // Newest first, so a corrected value sent later at the same sample wins over the first one.
  const ordered = [...readings].sort((a, b) => b.atMs - a.atMs);
  for (const r of ordered) {
    if (r.code.kind !== 'gas' || values[r.code.field] !== undefined) {
      continue;
    }
    values[r.code.field] = r.value;
    reported[REPORTED_KEY[r.code.field]] = r.reported;
  }
  const newest = ordered[0];
  return {
    gas: {
      at: newest?.at ?? '',
      specimen,
      ph: values.ph,
      pao2MmHg: values.po2,
      paco2MmHg: values.pco2,
      hco3MmolPerL: values.hco3,
      baseExcessMmolPerL: values.baseExcess,
      reported,
    },
    atMs: newest?.atMs ?? 0,
    reference: newest?.reference,
  };
}

function splitBySpecimen(group: readonly Reading[]): GasSample[] {
  const arterial = group.filter((r) => specimenOf(r) === 'arterial');
  const venous = group.filter((r) => specimenOf(r) === 'venous');
  const unknown = group.filter((r) => specimenOf(r) === 'unknown');
  const samples: GasSample[] = [];
  if (arterial.length > 0) {
    samples.push(buildSample([...arterial, ...unknown], 'arterial'));
  }
  if (venous.length > 0) {
    samples.push(buildSample(arterial.length > 0 ? venous : [...venous, ...unknown], 'venous'));
  }
  if (arterial.length === 0 && venous.length === 0 && unknown.length > 0) {
    samples.push(buildSample(unknown, 'unknown'));
  }
  return samples;
}

/** Groups gas readings into samples, newest first. */
export function groupBloodGases(readings: readonly Reading[]): readonly GasSample[] {
  const groups = new Map<string, Reading[]>();
  const keyedTimes = new Map<number, string>();
  for (const r of readings) {
    if (r.sampleKey !== undefined) {
      // Two keyed samples at one moment: an untied value cannot tell which it belongs to ('').
      const clash = keyedTimes.has(r.atMs) && keyedTimes.get(r.atMs) !== r.sampleKey;
      keyedTimes.set(r.atMs, clash ? '' : r.sampleKey);
    }
  }
  for (const r of readings) {
    // A value with no panel or specimen joins the one keyed sample taken at the same moment, if any.
    const joined = r.sampleKey ?? (keyedTimes.get(r.atMs) || undefined);
    const key = joined ?? `time:${r.atMs}`;
    const group = groups.get(key) ?? [];
    group.push(r);
    groups.set(key, group);
  }
  return [...groups.values()].flatMap(splitBySpecimen).sort((a, b) => b.atMs - a.atMs);
}
