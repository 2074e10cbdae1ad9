import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { escapeHtml, html, joinHtml, raw } from '../../src/review/html.js';

// Strings an attacker who controls a stored field (a unit name, a summary) would try.
const HOSTILE = [
  '<script>alert(1)</script>',
  '"><img src=x onerror=alert(1)>',
  "' onmouseover='alert(1)",
  '</td></tr></table><form action="https://evil.example">',
  '<svg/onload=alert(1)>',
  '`${x}`',
  '&lt;already escaped&gt;',
  '<!-- comment --><![CDATA[x]]>',
  'javascript:alert(1)',
  '\u0000\u0007<b>\u001b</b>',
];

describe('escapeHtml', () => {
  it.each(HOSTILE)('leaves no tag, quote or raw ampersand in %j', (text) => {
    const out = escapeHtml(text);
    expect(out).not.toMatch(/[<>"'`]/);
    // Every & starts an entity this function wrote.
    expect(out.replace(/&(amp|lt|gt|quot|#39|#96);/g, '')).not.toContain('&');
  });

  it('drops control characters that HTML parsers reject', () => {
    expect(escapeHtml('a\u0000b\u0007c\u001bd\u007fe')).toBe('abcde');
    expect(escapeHtml('tab\tline\nreturn\r')).toBe('tab\tline\nreturn\r');
  });

  it('round-trips through entity decoding for any text without control characters', () => {
    const decode = (s: string): string =>
      s
        .replace(/&lt;/g, '<')
        .replace(/&gt;/g, '>')
        .replace(/&quot;/g, '"')
        .replace(/&#39;/g, "'")
        .replace(/&#96;/g, '`')
        .replace(/&amp;/g, '&');
    fc.assert(
      fc.property(fc.string({ unit: 'grapheme' }), (text) => {
        // eslint-disable-next-line no-control-regex -- the same characters escapeHtml drops
        const printable = text.replace(/[\u0000-\u0008\u000B\u000C\u000E-\u001F\u007F]/g, '');
        expect(decode(escapeHtml(text))).toBe(printable);
      }),
      { seed: 7, numRuns: 300 },
    );
  });
});

describe('html', () => {
  it.each(HOSTILE)('escapes an interpolated text node and attribute: %j', (text) => {
    const out = html`<td title="${text}">${text}</td>`.toString();
    expect(out.startsWith('<td title="')).toBe(true);
    expect(out.endsWith('</td>')).toBe(true);
    // Only the template's own tags and the attribute's own two quotes remain.
    const inner = out.slice('<td title="'.length, -'</td>'.length);
    const [attribute, text2] = inner.split('">');
    expect(attribute).not.toMatch(/[<>"']/);
    expect(text2).not.toMatch(/[<>]/);
  });

  it('escapes each item of an interpolated list', () => {
    const out = html`<ul>${['<a>', '<b>'].map((item) => html`<li>${item}</li>`)}</ul>`.toString();
    expect(out).toBe('<ul><li>&lt;a&gt;</li><li>&lt;b&gt;</li></ul>');
  });

  it('escapes a plain string list as text, not markup', () => {
    expect(html`${['<i>', 'x']}`.toString()).toBe('&lt;i&gt;x');
  });

  it('passes a fragment made by html or raw through unchanged', () => {
    const inner = html`<em>${'a&b'}</em>`;
    expect(html`<p>${inner}</p>`.toString()).toBe('<p><em>a&amp;b</em></p>');
    expect(html`<p>${raw('<svg></svg>')}</p>`.toString()).toBe('<p><svg></svg></p>');
  });

  it('writes nothing for undefined, null and false, and a number as its digits', () => {
    expect(html`[${undefined}${null}${false}${42}${Number.NaN}]`.toString()).toBe('[42]');
  });

  it('does not treat an object that merely looks like a fragment as markup', () => {
    const forged = { toString: () => '<script>x</script>' } as unknown as string;
    expect(html`${forged}`.toString()).toBe('&lt;script&gt;x&lt;/script&gt;');
  });

  it('joins fragments with an escaped separator', () => {
    expect(joinHtml([html`<b>1</b>`, html`<b>2</b>`], ' < ').toString()).toBe('<b>1</b> &lt; <b>2</b>');
  });
});
