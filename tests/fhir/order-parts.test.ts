import { describe, expect, it } from 'vitest';
import { orderParts } from '../../src/fhir/order-parts.js';
import { LOINC, SNOMED, oxygenDeviceRequest, oxygenMedicationRequest, oxygenServiceRequest, quantity } from './helpers/larkspur-bay.js';

describe('orderParts', () => {
  it('collects a MedicationRequest’s dosage elements and words in reading order', () => {
    const parts = orderParts(
      oxygenMedicationRequest('m', {
        dosageInstruction: [{ text: 'a', patientInstruction: 'b', method: { text: 'Nasal cannula' }, doseAndRate: [{ rateQuantity: quantity(2, 'L/min') }] }],
        note: [{ text: 'c' }],
      }),
      'MedicationRequest',
    );
    expect(parts.deviceWords).toStrictEqual(['Nasal cannula']);
    expect(parts.quantities).toStrictEqual([{ value: quantity(2, 'L/min'), says: 'either', where: 'doseAndRate[0].rateQuantity' }]);
    expect(parts.texts).toStrictEqual(['a', 'b', 'c', 'Oxygen']);
  });

  it('lists the words and rates of several dosages dosage by dosage, each in its element order', () => {
    const parts = orderParts(
      oxygenMedicationRequest('m', {
        dosageInstruction: [
          {
            text: 'a1',
            method: { text: 'Venturi mask' },
            route: { text: 'Respiratory tract' },
            site: { text: 'Nose' },
            additionalInstruction: [{ text: 'x1' }, { text: 'x2' }],
            doseAndRate: [{ rateQuantity: quantity(4, 'L/min') }, { rateRange: { low: quantity(2, 'L/min') } }],
          },
          {
            text: 'a2',
            route: { text: 'Inhalation' },
            method: { text: 'Nasal cannula' },
            additionalInstruction: [{ text: 'x3' }],
            doseAndRate: [{ doseQuantity: quantity(28, '%') }],
          },
        ],
      }),
      'MedicationRequest',
    );
    expect(parts.deviceWords).toStrictEqual(['Venturi mask', 'Respiratory tract', 'Nose', 'Nasal cannula', 'Inhalation']);
    expect(parts.deviceName).toBe('Venturi mask');
    expect(parts.texts).toStrictEqual(['a1', 'a2', 'x1', 'x2', 'x3', 'Oxygen']);
    expect(parts.quantities.map((q) => q.where)).toStrictEqual(['doseAndRate[0].rateQuantity', 'doseAndRate[2].doseQuantity']);
    expect(parts.flowRanges).toStrictEqual([{ low: quantity(2, 'L/min') }]);
  });

  it('takes the device from SNOMED CT 371907003 on a ServiceRequest', () => {
    const parts = orderParts(oxygenServiceRequest('s', { code: { coding: [{ system: SNOMED, code: '371907003' }] } }), 'ServiceRequest');
    expect(parts.deviceFromCode).toStrictEqual({ device: 'nasal-cannula', text: 'SNOMED CT 371907003' });
  });

  it('sorts DeviceRequest parameters by what their code names', () => {
    const parts = orderParts(
      oxygenDeviceRequest('d', 'HFNC', {
        parameter: [
          { code: { coding: [{ system: LOINC, code: '3151-8' }] }, valueQuantity: quantity(40, 'L/min') },
          { code: { text: 'FiO2' }, valueQuantity: quantity(50, '%') },
          { code: { text: 'Target saturation' }, valueRange: { low: quantity(92, '%'), high: quantity(96, '%') } },
          { code: { text: 'Temperature' }, valueQuantity: quantity(37, 'Cel') },
          { code: { text: 'Flow' }, valueRange: { low: quantity(30, 'L/min'), high: quantity(40, 'L/min') } },
        ],
      }),
      'DeviceRequest',
    );
    expect(parts.quantities.map((q) => [q.says, q.where])).toStrictEqual([
      ['flow', 'parameter[0]'],
      ['fio2', 'parameter[1]'],
      ['flow-only', 'parameter[3]'],
    ]);
    expect([parts.targetRanges.length, parts.flowRanges.length, parts.deviceName]).toStrictEqual([1, 1, 'HFNC']);
  });

  describe('edge cases', () => {
    it('collects nothing from garbage fields', () => {
      const parts = orderParts({ resourceType: 'ServiceRequest', orderDetail: 'x', quantityQuantity: 2, note: [1] }, 'ServiceRequest');
      expect([parts.deviceWords, parts.quantities, parts.texts]).toStrictEqual([[], [], []]);
    });
  });
});
