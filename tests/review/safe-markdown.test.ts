import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { renderInline, renderSafeMarkdown } from '../../src/review/safe-markdown.js';

/** The tags this renderer may write; anything else in its output would be injected markup. */
const OWN_TAGS = /<\/?(p|ul|li|strong|em|code|table|thead|tbody|tr|th|td)>|<a href="https?:\/\/[^"<>]*" rel="noreferrer noopener">|<\/a>/g;

function strayMarkup(out: string): string {
  return out.replace(OWN_TAGS, '');
}

function balanced(out: string): boolean {
  const stack: string[] = [];
  for (const match of out.matchAll(/<(\/?)([a-z]+)[^>]*>/g)) {
    const [, closing, tag] = match;
    if (closing === '') {
      stack.push(tag ?? '');
    } else if (stack.pop() !== tag) {
      return false;
    }
  }
  return stack.length === 0;
}

describe('renderSafeMarkdown', () => {
  it('shows raw HTML in the text as text', () => {
    const out = renderSafeMarkdown('Ward <script>alert(1)</script> and <img src=x onerror=alert(1)>').toString();
    expect(out).toBe('<p>Ward &lt;script&gt;alert(1)&lt;/script&gt; and &lt;img src=x onerror=alert(1)&gt;</p>');
  });

  it('renders the workings shape: bold heading paragraph, then a nested list', () => {
    const md = '**Calculation**\n\n- **S/F ratio** (BTS 2017)\n  - Formula: SpO2 / FiO2\n  - Result: **310**\n- Next';
    expect(renderSafeMarkdown(md).toString()).toBe(
      '<p><strong>Calculation</strong></p>\n' +
        '<ul><li><strong>S/F ratio</strong> (BTS 2017)<ul><li>Formula: SpO2 / FiO2</li><li>Result: <strong>310</strong></li></ul></li><li>Next</li></ul>',
    );
  });

  it('renders a lead line followed by its list, as the card detail writes "Based on"', () => {
    expect(renderSafeMarkdown('**Based on:**\n- SpO2 88 %\n- Order: nasal cannula').toString()).toBe(
      '<p><strong>Based on:</strong></p><ul><li>SpO2 88 %</li><li>Order: nasal cannula</li></ul>',
    );
  });

  it('turns backslash escapes from escapeMarkdown back into the literal characters, escaped for HTML', () => {
    expect(renderInline('a \\*b\\* \\<c\\> \\_d\\_ \\| e')).toBe('a *b* &lt;c&gt; _d_ | e');
  });

  it('keeps snake_case words and lone markers literal', () => {
    expect(renderInline('set_aside_notes and 2 * 3')).toBe('set_aside_notes and 2 * 3');
  });

  it('renders a whole-paragraph emphasis as the cautions line does', () => {
    expect(renderInline('_Advisory only. Defer to local policy._')).toBe('<em>Advisory only. Defer to local policy.</em>');
  });

  it('links only http(s) autolinks, and never a javascript: one', () => {
    expect(renderInline('<https://www.brit-thoracic.org.uk/x?a=1&b=2>')).toBe(
      '<a href="https://www.brit-thoracic.org.uk/x?a=1&amp;b=2" rel="noreferrer noopener">https://www.brit-thoracic.org.uk/x?a=1&amp;b=2</a>',
    );
    expect(renderInline('<javascript:alert(1)>')).toBe('&lt;javascript:alert(1)&gt;');
    expect(renderInline('<https://x.example/"onmouseover=alert(1)>')).not.toContain('"onmouseover');
  });

  it('renders a simple pipe table, escaping its cells', () => {
    const out = renderSafeMarkdown('| Name | Value |\n|---|---|\n| SpO2 | <b>91</b> % |').toString();
    expect(out).toBe(
      '<table><thead><tr><th>Name</th><th>Value</th></tr></thead><tbody><tr><td>SpO2</td><td>&lt;b&gt;91&lt;/b&gt; %</td></tr></tbody></table>',
    );
  });

  it('closes unbalanced markers so tags always pair', () => {
    expect(renderInline('**open _and open')).toBe('<strong>open <em>and open</em></strong>');
  });

  it('never lets markup through and always balances its tags, whatever the input', () => {
    const pieces = fc.constantFrom('<', '>', '"', "'", '&', '**', '_', '`', '\\', '|', '- ', '  - ', '\n', '\n\n', 'a', ' ', '<https://a.b>', '<script>', '|---|', 'javascript:');
    fc.assert(
      fc.property(fc.array(pieces, { maxLength: 40 }), (parts) => {
        const out = renderSafeMarkdown(parts.join('')).toString();
        expect(strayMarkup(out)).not.toMatch(/[<>]/);
        expect(balanced(out)).toBe(true);
      }),
      { seed: 11, numRuns: 500 },
    );
  });
});
