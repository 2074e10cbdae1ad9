import { describe, expect, it } from 'vitest';
import { makeFinding } from '../../../../src/core/rules/support/make-finding.js';

describe('makeFinding', () => {
  it('cites each source once, in the order the rule gave them', () => {
    const finding = makeFinding(
      { id: 'oxygenation-summary', version: 3, defaultIndicator: 'info' },
      { orderReference: undefined, values: {}, sourceKeys: ['alveolar-gas', 'bts-2017', 'alveolar-gas'] },
    );
    expect(finding.sourceKeys).toStrictEqual(['alveolar-gas', 'bts-2017']);
    expect(finding.indicator).toBe('info');
  });
});
