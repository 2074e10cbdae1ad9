import { describe, expect, it } from 'vitest';
import { BUILT_IN_DEVICE_CATALOGUE } from '../../src/core/devices/catalogue.js';
import { parsePolicyText, type PolicyParse, type PolicyProblem } from '../../src/policy/parse-policy.js';
import { policyWith } from './support/policy-sections.js';

// Each test writes its `devices` section at the top of the file, so line 1 is `devices:` and the lines
// and columns below are counted by hand from those lines (src/policy/locate.ts: the key, or list item,
// at fault). The reservoir mask and a 28 % valve are stocked unless a test is about them, so that the
// stock warnings do not clutter the others.

function problems(result: PolicyParse): readonly PolicyProblem[] {
  return result.kind === 'invalid' ? result.problems : [];
}

function only(list: readonly PolicyProblem[]): PolicyProblem {
  if (list.length !== 1 || list[0] === undefined) {
    throw new Error(`expected one problem, got ${list.map((p) => `${p.path}: ${p.message}`).join('; ')}`);
  }
  return list[0];
}

const RESERVOIR = '  reservoir-mask: { flowLPerMin: { from: 10, to: 15 } }'; // BTS 2017 Table 2; BTS 2008
const VENTURI_28 = ['  venturi-mask:', '    settings:', '      - { fio2Percent: 28, minimumFlowLPerMin: 4 }']; // BTS 2017 Table 4

function parseDevices(lines: readonly string[]): PolicyParse {
  return parsePolicyText(policyWith(['devices:', ...lines]));
}

describe('a valid device catalogue', () => {
  it('loads the Larkspur Bay catalogue of docs/policy.md with no problem and no warning', () => {
    const result = parseDevices([
      '  nasal-cannula: { flowLPerMin: { from: 1, to: 4 } }', // inside BTS 2017's 1-6 L/min
      RESERVOIR,
      '  venturi-mask:',
      '    settings:',
      '      - { fio2Percent: 24, minimumFlowLPerMin: 2 }', // BTS 2017, Table 4
      '      - { fio2Percent: 28, minimumFlowLPerMin: 4 }', // BTS 2017, Table 4
      '      - { fio2Percent: 35, minimumFlowLPerMin: 8 }', // device labelling (common practice)
      '      - { fio2Percent: 60, minimumFlowLPerMin: 15 }', // device labelling (common practice)
    ]);
    expect(problems(result)).toStrictEqual([]);
    expect(result.warnings).toStrictEqual([]);
  });

  it('lets two settings share a minimum flow: a higher setting needs at least as much, not more', () => {
    // Invented labels; the mass balance O2 flow = total x (F - 0.21)/0.79 only forbids a fall
    const result = parseDevices([RESERVOIR, ...VENTURI_28, '      - { fio2Percent: 31, minimumFlowLPerMin: 4 }']);
    expect(problems(result)).toStrictEqual([]);
  });

  it('takes the built-in catalogue when the file has no devices section', () => {
    const result = parsePolicyText(policyWith([]));
    expect(result.kind === 'ok' && result.policy.devices).toStrictEqual(BUILT_IN_DEVICE_CATALOGUE);
  });
});

describe('refused catalogues', () => {
  it('refuses a device kind the model does not know, suggesting the nearest', () => {
    const problem = only(problems(parseDevices([RESERVOIR, ...VENTURI_28, '  nasal-canula: { flowLPerMin: { from: 1, to: 4 } }'])));
    expect(problem).toMatchObject({ path: 'devices.nasal-canula', line: 6, column: 3, message: "unknown key 'nasal-canula'" });
    expect(problem.fix).toContain("did you mean 'nasal-cannula'?");
  });

  it('refuses a misspelt key inside a device', () => {
    const list = problems(parseDevices([RESERVOIR, ...VENTURI_28, '  nasal-cannula: { flowLPerMn: { from: 1, to: 4 } }']));
    // The misspelt key, and the limits it was meant to give, missing: both at once, as every problem is
    expect(list.map((p) => p.path)).toStrictEqual(['devices.nasal-cannula.flowLPerMin', 'devices.nasal-cannula.flowLPerMn']);
    const problem = list[1];
    expect(problem).toMatchObject({ path: 'devices.nasal-cannula.flowLPerMn', line: 6, column: 20, message: "unknown key 'flowLPerMn'" });
    expect(problem?.fix).toContain("did you mean 'flowLPerMin'?");
  });

  it('refuses flow limits that are not ordered', () => {
    const problem = only(problems(parseDevices([RESERVOIR, ...VENTURI_28, '  nasal-cannula: { flowLPerMin: { from: 4, to: 2 } }'])));
    expect(problem).toMatchObject({ path: 'devices.nasal-cannula.flowLPerMin', line: 6, column: 20 });
    expect(problem.message).toBe('the limits 4–2 L/min are not ordered: from must not exceed to');
    expect(problem.fix).toBe('swap the two limits, or correct the one that is wrong');
  });

  it.each([
    // BTS 2017, Tables 2 and 4: nasal cannulae up to 6 L/min, poorly tolerated above about 4
    ['a nasal cannula above 6 L/min', '  nasal-cannula: { flowLPerMin: { from: 1, to: 8 } }', 'devices.nasal-cannula.flowLPerMin.to', 44, 'dries the nose', 'lower flowLPerMin.to to 6 L/min or less'],
    // Jensen et al. 1991: a simple face mask rebreathes below 5 L/min
    ['a simple face mask below 5 L/min', '  simple-face-mask: { flowLPerMin: { from: 3, to: 10 } }', 'devices.simple-face-mask.flowLPerMin.from', 38, 'rebreathes exhaled gas', 'raise flowLPerMin.from to 5 L/min or more'],
    // BTS 2008: reservoir mask 10-15 L/min; the bag collapses below
    ['a reservoir mask below 10 L/min', '  reservoir-mask: { flowLPerMin: { from: 6, to: 15 } }', 'devices.reservoir-mask.flowLPerMin.from', 36, 'reservoir bag is not kept full', 'raise flowLPerMin.from to 10 L/min or more'],
    // Common practice: a ward flowmeter tops out at 15 L/min (thresholds.flowmeterMaxLPerMin default)
    ['a tracheostomy mask beyond the flowmeter', '  tracheostomy-mask: { flowLPerMin: { from: 5, to: 20 } }', 'devices.tracheostomy-mask.flowLPerMin.to', 48, 'more than a ward flowmeter gives', 'lower flowLPerMin.to to 15 L/min or less'],
  ])('refuses %s, giving the reason', (_name, line, path, column, reason, fix) => {
    const lines = line.startsWith('  reservoir-mask') ? [line, ...VENTURI_28] : [RESERVOIR, ...VENTURI_28, line];
    const problem = only(problems(parseDevices(lines)));
    expect(problem.path).toBe(path);
    expect([problem.line, problem.column]).toStrictEqual([line.startsWith('  reservoir-mask') ? 2 : 6, column]);
    expect(problem.message).toContain(reason);
    expect(problem.fix).toBe(fix);
  });

  it('warns, and loads, for high-flow limits beyond the 60 L/min the model rests on', () => {
    // Annual Update in ICEM 2017 (PMC5359952): adult high-flow up to 60 L/min
    const result = parseDevices([RESERVOIR, ...VENTURI_28, '  high-flow-nasal-cannula: { flowLPerMin: { from: 10, to: 70 } }']);
    expect(result.kind).toBe('ok');
    const warning = only(result.warnings);
    expect(warning).toMatchObject({ path: 'devices.high-flow-nasal-cannula.flowLPerMin.to', line: 6, column: 55 });
    expect(warning.message).toContain('adult high-flow devices deliver up to 60 L/min');
  });
});

describe('refused Venturi valves', () => {
  const valves = (...items: readonly string[]): PolicyParse =>
    parseDevices([RESERVOIR, '  venturi-mask:', '    settings:', ...items.map((item) => `      - ${item}`)]);

  it('refuses a setting outside 24-60 %, the span the model holds measured accuracy for', () => {
    // Jones 1984 measured 24-60 % valves
    const problem = only(problems(valves('{ fio2Percent: 28, minimumFlowLPerMin: 4 }', '{ fio2Percent: 70, minimumFlowLPerMin: 15 }')));
    expect(problem).toMatchObject({ path: 'devices.venturi-mask.settings.1.fio2Percent', line: 6, column: 11 });
    expect(problem.message).toContain('70 % is not a Venturi setting the model supports: valves run from 24 % to 60 %');
    expect(problem.fix).toBe('use a setting from 24 to 60 %');
  });

  it('refuses a setting written as a fraction, and says to write the percent', () => {
    const problem = only(problems(valves('{ fio2Percent: 0.28, minimumFlowLPerMin: 4 }')));
    expect(problem).toMatchObject({ path: 'devices.venturi-mask.settings.0.fio2Percent', line: 5, column: 11 });
    expect(problem.fix).toBe('write the setting in percent as on the valve, e.g. 28');
  });

  it('refuses a valve listed twice', () => {
    // BTS 2017, Table 4: 24 % at 2 L/min, 28 % at 4 L/min
    const problem = only(
      problems(valves('{ fio2Percent: 24, minimumFlowLPerMin: 2 }', '{ fio2Percent: 28, minimumFlowLPerMin: 4 }', '{ fio2Percent: 28, minimumFlowLPerMin: 6 }')),
    );
    expect(problem).toMatchObject({ path: 'devices.venturi-mask.settings.2', line: 7, column: 9 });
    expect(problem.message).toBe('the 28 % valve is listed twice (items 2 and 3)');
  });

  it('refuses minimum flows that fall as the setting rises, citing the mass balance', () => {
    // BTS 2017, Table 4: 28 % at 4 L/min; a 35 % valve at 3 L/min (a slip for 8, device labelling) falls below it
    const problem = only(problems(valves('{ fio2Percent: 28, minimumFlowLPerMin: 4 }', '{ fio2Percent: 35, minimumFlowLPerMin: 3 }')));
    expect(problem).toMatchObject({ path: 'devices.venturi-mask.settings.1.minimumFlowLPerMin', line: 6, column: 28 });
    expect(problem.message).toContain("the 35 % valve's minimum flow, 3 L/min, is below the 28 % valve's 4 L/min");
    expect(problem.message).toContain('air-entrainment mass balance: O2 flow = total flow × (F − 0.21)/0.79');
    expect(problem.fix).toContain('24 % 2, 28 % 4, 31 % 6, 35 % 8, 40 % 10, 60 % 15 L/min');
  });

  it('finds a fall wherever the valves are listed, naming the highest lower-setting flow it falls below', () => {
    // Listed out of order: 60 % at 6 falls below 35 % at 8 and 40 % at 10 (device labelling, common practice)
    const list = problems(
      valves('{ fio2Percent: 60, minimumFlowLPerMin: 6 }', '{ fio2Percent: 35, minimumFlowLPerMin: 8 }', '{ fio2Percent: 40, minimumFlowLPerMin: 10 }'),
    );
    const problem = only(list);
    expect(problem.path).toBe('devices.venturi-mask.settings.0.minimumFlowLPerMin');
    expect(problem.message).toContain("is below the 40 % valve's 10 L/min");
  });

  it('refuses a valve whose minimum flow a ward flowmeter cannot give', () => {
    // Common practice: a ward flowmeter tops out at 15 L/min
    const problem = only(problems(valves('{ fio2Percent: 60, minimumFlowLPerMin: 18 }', '{ fio2Percent: 28, minimumFlowLPerMin: 4 }')));
    expect(problem).toMatchObject({ path: 'devices.venturi-mask.settings.0.minimumFlowLPerMin', line: 5, column: 28 });
    expect(problem.message).toContain('more than a ward flowmeter gives');
  });

  it('refuses an empty list of valves', () => {
    const problem = only(problems(parseDevices([RESERVOIR, '  venturi-mask:', '    settings: []'])));
    expect(problem).toMatchObject({ path: 'devices.venturi-mask.settings', line: 4, column: 5 });
  });
});

describe('stock the advice relies on', () => {
  it('warns when no reservoir mask is stocked', () => {
    // BTS 2017, Table 2: a reservoir mask at 15 L/min below 85 %
    const result = parseDevices(VENTURI_28);
    expect(result.kind).toBe('ok');
    expect(only(result.warnings)).toMatchObject({ path: 'devices', line: 1, column: 1 });
    expect(only(result.warnings).message).toContain('no reservoir mask is stocked');
  });

  it('warns when no 24 % or 28 % valve is stocked, and when no Venturi mask is', () => {
    // BTS 2017, Table 4: 24 % at 2-3 L/min or 28 % at 4 L/min for patients at risk of hypercapnia
    const without = parseDevices([RESERVOIR, '  venturi-mask:', '    settings:', '      - { fio2Percent: 35, minimumFlowLPerMin: 8 }']);
    expect(only(without.warnings)).toMatchObject({ path: 'devices.venturi-mask', line: 3, column: 3 });
    expect(only(without.warnings).message).toContain('no 24 % or 28 % Venturi valve is stocked');
    const none = parseDevices([RESERVOIR]);
    expect(only(none.warnings)).toMatchObject({ path: 'devices', line: 1, column: 1 });
  });
});
