import { describe, expect, it } from 'vitest';
import { findDeviceMentions, isOutsideTheOrder, readDeviceText } from '../../src/fhir/read-device-text.js';

describe('readDeviceText', () => {
  // The device words are the trade's generic names (common practice); the kinds are our own.
  it.each([
    ['2 L/min via nasal cannula', 'nasal-cannula', 'nasal cannula'],
    ['nasal cannulae 1-2 L/min', 'nasal-cannula', 'nasal cannulae'], // BTS 2017, Table 4 wording
    ['2L NC', 'nasal-cannula', 'NC'],
    ['O2 via nasal prongs', 'nasal-cannula', 'nasal prongs'],
    ['nasal specs 3L', 'nasal-cannula', 'nasal specs'],
    ['simple face mask 5-10 L/min', 'simple-face-mask', 'simple face mask'], // BTS 2017, Table 2
    ['Hudson mask 6L', 'simple-face-mask', 'Hudson mask'],
    ['MC mask', 'simple-face-mask', 'MC mask'],
    ['oxygen via face mask', 'simple-face-mask', 'face mask'],
    ['Venturi 28%', 'venturi-mask', 'Venturi'], // BTS 2017, Table 4
    ['28% venturi', 'venturi-mask', 'venturi'],
    ['24% mask at 2 L/min', 'venturi-mask', '24% mask'], // BTS 2017, Table 4
    ['fixed performance mask 35%', 'venturi-mask', 'fixed performance mask'],
    ['air-entrainment mask 40%', 'venturi-mask', 'air-entrainment mask'],
    ['15 L/min non-rebreather', 'reservoir-mask', 'non-rebreather'], // BTS 2017, Table 2
    ['NRB 15L', 'reservoir-mask', 'NRB'],
    ['reservoir mask 15 L/min', 'reservoir-mask', 'reservoir mask'], // BTS 2017, Table 2
    ['trauma mask', 'reservoir-mask', 'trauma mask'],
    ['HFNC 50 L/min FiO2 0.45', 'high-flow-nasal-cannula', 'HFNC'],
    ['HFNO 40 L/min', 'high-flow-nasal-cannula', 'HFNO'],
    ['high-flow nasal oxygen 60 L/min', 'high-flow-nasal-cannula', 'high-flow nasal oxygen'],
    ['high flow 40L 60%', 'high-flow-nasal-cannula', 'high flow'],
    ['tracheostomy mask 35%', 'tracheostomy-mask', 'tracheostomy mask'],
    ['trach collar humidified', 'tracheostomy-mask', 'trach collar'],
    ['CPAP 10 cmH2O', 'cpap-niv', 'CPAP'],
    ['NIV IPAP 20 EPAP 5', 'cpap-niv', 'NIV'],
    ['BiPAP overnight', 'cpap-niv', 'BiPAP'],
    ['NIPPV', 'cpap-niv', 'NIPPV'],
    // further words from docs/basis/devices.md (common practice)
    ['O2 2L via n/c', 'nasal-cannula', 'n/c'],
    ['medium-concentration mask 6L', 'simple-face-mask', 'medium-concentration mask'],
    ['V28 at 4L', 'venturi-mask', 'V28'],
    ['VM 24 % 2L', 'venturi-mask', 'VM 24'],
    ['controlled-oxygen mask', 'venturi-mask', 'controlled-oxygen mask'],
    ['HAFOE 35%', 'venturi-mask', 'HAFOE'],
    ['high-concentration mask', 'reservoir-mask', 'high-concentration mask'],
    ['15 L mask', 'reservoir-mask', '15 L mask'],
    ['stoma mask 35%', 'tracheostomy-mask', 'stoma mask'],
    ['trachy mask', 'tracheostomy-mask', 'trachy mask'],
    ['bilevel overnight', 'cpap-niv', 'bilevel'],
    ['NHF 40 L/min', 'high-flow-nasal-cannula', 'NHF'],
    ['HHFNC 40 L/min', 'high-flow-nasal-cannula', 'HHFNC'],
    // Short ward words, read only where a device stands (common practice in UK and Australian orders)
    ['O2 8L via NP, target SpO2 94-98%', 'nasal-cannula', 'NP'],
    ['NP 2L', 'nasal-cannula', 'NP'],
    ['2L NP', 'nasal-cannula', 'NP'],
    ['2 L/min np', 'nasal-cannula', 'np'],
    ['O2 on NP', 'nasal-cannula', 'NP'],
    ['2L via prongs', 'nasal-cannula', 'prongs'],
    ['3 litres specs', 'nasal-cannula', 'specs'],
    ['O2 via nasal spectacles', 'nasal-cannula', 'nasal spectacles'],
    ['6L FM', 'simple-face-mask', 'FM'],
    ['via SFM 5 L/min', 'simple-face-mask', 'SFM'],
    ['6L facemask', 'simple-face-mask', 'facemask'],
    ['8L via Hudson', 'simple-face-mask', 'Hudson'],
    ['4L via VM', 'venturi-mask', 'VM'],
    ['O2 via trachy mask 5L', 'tracheostomy-mask', 'trachy mask'],
    ['BiPAP 16/6', 'cpap-niv', 'BiPAP'],
  ])('reads "%s" as %s', (text, device, words) => {
    const read = readDeviceText(text);
    expect(read?.device).toBe(device);
    expect(read?.deviceText).toBe(words);
  });

  it('prefers a specific device word to the loose "high flow"', () => {
    // "High-flow oxygen" is also said of a reservoir mask at 15 L/min (BTS 2017, Table 2).
    expect(readDeviceText('high flow oxygen via non-rebreather 15L')?.device).toBe('reservoir-mask');
  });

  it('reads high-flow nasal cannula as one device, not as a nasal cannula', () => {
    expect(readDeviceText('high flow nasal cannula 50 L/min')).toStrictEqual({
      device: 'high-flow-nasal-cannula',
      deviceText: 'high flow nasal cannula',
      alsoNamed: [],
    });
  });

  it('skips devices named as history or as a plan', () => {
    expect(readDeviceText('home NIV overnight; 2L NC')?.device).toBe('nasal-cannula');
    expect(readDeviceText('2L NC, escalate to 15L NRB if SpO2 < 88%')).toStrictEqual({
      device: 'nasal-cannula',
      deviceText: 'NC',
      alsoNamed: [],
    });
  });

  it('lists the other devices a text names, for a note', () => {
    expect(readDeviceText('2L NC or Venturi 24%')).toStrictEqual({
      device: 'nasal-cannula',
      deviceText: 'NC',
      alsoNamed: ['venturi-mask'],
    });
  });

  describe('edge cases', () => {
    // Words with no kind here (docs/basis/devices.md): the reader leaves the device undefined.
    it.each([[''], ['Oxygen therapy'], ['mask'], ['HFNCX'], ['ENC'], ['T-piece 10L'], ['bag-valve mask'], ['partial rebreathing mask'], ['HFO'],
      // "NP" as nurse practitioner, and short words outside a device position (common practice)
      ['seen by NP today'], ['discussed with NP'], ['NP review'], ['FM radio'], ['VMO2 note'], ['SNP'], ['inspecs']])(
      'names no device in "%s"',
      (text) => {
        expect(readDeviceText(text)).toBeUndefined();
      },
    );

    it('gives each mention once, in order', () => {
      const found = findDeviceMentions('Venturi mask 28%, then NC').map((m) => [m.device, m.text]);
      expect(found).toStrictEqual([
        ['venturi-mask', 'Venturi mask'],
        ['nasal-cannula', 'NC'],
      ]);
    });

    it('looks only at the words since the last comma for history words', () => {
      const text = 'previous NIV, now NC';
      expect(isOutsideTheOrder(text, text.indexOf('NIV'))).toBe(true);
      expect(isOutsideTheOrder(text, text.indexOf('NC'))).toBe(false);
    });
  });
});
