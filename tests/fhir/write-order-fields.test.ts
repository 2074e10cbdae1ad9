import { describe, expect, it } from 'vitest';
import { firstObject, writeDevice, writeFio2, writeFlow } from '../../src/fhir/write-order-fields.js';
import { LOINC, SNOMED, UCUM, quantity } from './helpers/larkspur-bay.js';

const litres = (value: number) => ({ value, unit: 'L/min', system: UCUM, code: 'L/min' });

describe('writeFlow', () => {
  it('puts the flow in an orderDetail when a ServiceRequest quantity holds an FiO2', () => {
    const sr: Record<string, unknown> = { resourceType: 'ServiceRequest', quantityQuantity: quantity(28, '%') };
    writeFlow(sr, 4); // BTS 2017, Table 4: 28 % Venturi at 4 L/min
    expect(sr).toStrictEqual({ resourceType: 'ServiceRequest', quantityQuantity: quantity(28, '%'), orderDetail: [{ text: 'Oxygen flow 4 L/min' }] });
  });

  it('replaces a ServiceRequest quantityRange with one quantityQuantity', () => {
    const sr: Record<string, unknown> = { resourceType: 'ServiceRequest', quantityRange: { low: quantity(1, 'L/min'), high: quantity(2, 'L/min') } };
    writeFlow(sr, 2);
    expect(sr).toStrictEqual({ resourceType: 'ServiceRequest', quantityQuantity: litres(2) });
  });

  it('replaces every DeviceRequest flow parameter with one LOINC 3151-8 parameter', () => {
    const dr: Record<string, unknown> = {
      resourceType: 'DeviceRequest',
      parameter: [{ code: { text: 'Flow' }, valueRange: {} }, { code: { text: 'Humidity' }, valueQuantity: quantity(100, '%') }],
    };
    writeFlow(dr, 40);
    expect(dr['parameter']).toStrictEqual([
      { code: { text: 'Humidity' }, valueQuantity: quantity(100, '%') },
      { code: { coding: [{ system: LOINC, code: '3151-8', display: 'Inhaled oxygen flow rate' }], text: 'Oxygen flow' }, valueQuantity: litres(40) },
    ]);
  });
});

describe('writeFio2', () => {
  it('removes every FiO2 parameter when the new device takes none', () => {
    const dr: Record<string, unknown> = { resourceType: 'DeviceRequest', parameter: [{ code: { coding: [{ system: LOINC, code: '3150-0' }] }, valueQuantity: quantity(45, '%') }] };
    writeFio2(dr, undefined);
    expect(dr['parameter']).toStrictEqual([]);
  });

  it('writes a MedicationRequest setting as doseQuantity in %', () => {
    const mr: Record<string, unknown> = { resourceType: 'MedicationRequest' };
    writeFio2(mr, 0.35);
    expect(mr).toStrictEqual({
      resourceType: 'MedicationRequest',
      dosageInstruction: [{ doseAndRate: [{ doseQuantity: { value: 35, unit: '%', system: UCUM, code: '%' } }] }],
    });
  });
});

describe('writeDevice', () => {
  it('drops a DeviceRequest codeReference for a codeCodeableConcept', () => {
    const dr: Record<string, unknown> = { resourceType: 'DeviceRequest', codeReference: { reference: 'Device/nc-1' } };
    writeDevice(dr, 'simple-face-mask', undefined);
    expect(dr).toStrictEqual({ resourceType: 'DeviceRequest', codeCodeableConcept: { text: 'Simple face mask' } });
  });

  it('drops the old device codings of a ServiceRequest orderDetail but keeps its words', () => {
    const sr: Record<string, unknown> = {
      resourceType: 'ServiceRequest',
      code: { coding: [{ system: SNOMED, code: '57485005' }] },
      orderDetail: [{ coding: [{ system: 'urn:larkspur-bay:devices', code: 'NC', display: 'Nasal cannula' }] }, { text: 'Humidified' }],
    };
    writeDevice(sr, 'tracheostomy-mask', undefined);
    expect(sr['orderDetail']).toStrictEqual([{ text: 'Tracheostomy mask' }, { text: 'Humidified' }]);
    expect(sr['code']).toStrictEqual({ coding: [{ system: SNOMED, code: '57485005' }] });
  });
});

describe('edge cases', () => {
  it('firstObject creates the array, or replaces a first item that is not an object', () => {
    const holder: Record<string, unknown> = { a: 'x', b: [7, { keep: true }] };
    firstObject(holder, 'a')['n'] = 1;
    firstObject(holder, 'b')['n'] = 2;
    expect(holder).toStrictEqual({ a: [{ n: 1 }], b: [{ n: 2 }, { keep: true }] });
  });
});
