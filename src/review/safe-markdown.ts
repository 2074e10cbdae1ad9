import { escapeHtml, HtmlFragment } from './html.js';

/**
 * The small part of Markdown the service's own card detail and workings use (src/cds/card-detail.ts,
 * card-workings.ts), rendered without ever passing markup through: paragraphs, `-` lists nested by
 * two spaces, `**bold**`, `_emphasis_`, `` `code` ``, backslash escapes, `<https://…>` links, and
 * simple pipe tables. Every character of the text is escaped on its way out; the only tags written
 * are the ones this file names, always closed. Raw HTML in the input is shown as text. Pure.
 */

const ESCAPABLE = /[!-/:-@[-`{-~]/;
const AUTOLINK = /^<(https?:\/\/[^\s<>"'`]+)>/;
const WORD = /[\p{L}\p{N}]/u;

type InlineTag = 'strong' | 'em';

function isWord(character: string | undefined): boolean {
  return character !== undefined && WORD.test(character);
}

function isSpace(character: string | undefined): boolean {
  return character === undefined || /\s/.test(character);
}

/** Inline markup of one block's text. Unbalanced markers are closed at the end, so tags always pair. */
export function renderInline(text: string): string {
  let out = '';
  const open: InlineTag[] = [];
  const toggle = (tag: InlineTag): boolean => {
    if (open[open.length - 1] === tag) {
      open.pop();
      out += `</${tag}>`;
      return true;
    }
    if (open.includes(tag)) {
      return false;
    }
    open.push(tag);
    out += `<${tag}>`;
    return true;
  };
  let i = 0;
  while (i < text.length) {
    const c = text[i] ?? '';
    const next = text[i + 1];
    if (c === '\\' && next !== undefined && ESCAPABLE.test(next)) {
      out += escapeHtml(next);
      i += 2;
      continue;
    }
    if (c === '*' && next === '*' && toggle('strong')) {
      i += 2;
      continue;
    }
    if (c === '_') {
      const before = text[i - 1];
      const closing = open[open.length - 1] === 'em' && !isSpace(before) && !isWord(next);
      const opening = !open.includes('em') && !isWord(before) && !isSpace(next);
      if ((closing || opening) && toggle('em')) {
        i += 1;
        continue;
      }
    }
    if (c === '`') {
      const end = text.indexOf('`', i + 1);
      if (end > i + 1) {
        out += `<code>${escapeHtml(text.slice(i + 1, end))}</code>`;
        i = end + 1;
        continue;
      }
    }
    if (c === '<') {
      const link = AUTOLINK.exec(text.slice(i));
      if (link !== null) {
        const url = escapeHtml(link[1] ?? '');
        out += `<a href="${url}" rel="noreferrer noopener">${url}</a>`;
        i += link[0].length;
        continue;
      }
    }
    out += escapeHtml(c);
    i += 1;
  }
  while (open.length > 0) {
    out += `</${open.pop() ?? 'em'}>`;
  }
  return out;
}

interface ListItem {
  readonly depth: number;
  readonly text: string;
}

const LIST_LINE = /^( *)[-*] (.*)$/;

function renderList(items: readonly ListItem[]): string {
  let out = '';
  let depth = -1;
  for (const item of items) {
    // A deeper item opens one level only, so a jump of several levels cannot leave a list unclosed.
    const target = Math.min(item.depth, depth + 1);
    if (target > depth) {
      out += '<ul>';
      depth = target;
    } else {
      out += '</li>';
      while (depth > target) {
        out += '</ul></li>';
        depth -= 1;
      }
    }
    out += `<li>${renderInline(item.text)}`;
  }
  out += '</li>';
  while (depth > 0) {
    out += '</ul></li>';
    depth -= 1;
  }
  return `${out}</ul>`;
}

function splitRow(line: string): string[] {
  const cells: string[] = [];
  let cell = '';
  const body = line.trim().replace(/^\|/, '');
  for (let i = 0; i < body.length; i += 1) {
    const c = body[i] ?? '';
    if (c === '\\' && body[i + 1] === '|') {
      cell += '\\|';
      i += 1;
    } else if (c === '|') {
      cells.push(cell.trim());
      cell = '';
    } else {
      cell += c;
    }
  }
  if (cell.trim() !== '') {
    cells.push(cell.trim());
  }
  return cells;
}

const TABLE_RULE = /^\s*\|?\s*:?-{3,}:?\s*(\|\s*:?-{3,}:?\s*)*\|?\s*$/;

function renderTable(lines: readonly string[]): string | undefined {
  const [head, rule, ...rows] = lines;
  if (head === undefined || rule === undefined || !TABLE_RULE.test(rule)) {
    return undefined;
  }
  const cells = (line: string, tag: 'th' | 'td'): string =>
    `<tr>${splitRow(line).map((cell) => `<${tag}>${renderInline(cell)}</${tag}>`).join('')}</tr>`;
  return `<table><thead>${cells(head, 'th')}</thead><tbody>${rows.map((row) => cells(row, 'td')).join('')}</tbody></table>`;
}

function renderBlock(lines: readonly string[]): string {
  if (lines.every((line) => LIST_LINE.test(line) || /^ {2,}\S/.test(line))) {
    const items: ListItem[] = [];
    for (const line of lines) {
      const match = LIST_LINE.exec(line);
      if (match !== null) {
        items.push({ depth: Math.floor((match[1] ?? '').length / 2), text: match[2] ?? '' });
      } else if (items.length > 0) {
        // A continuation line belongs to the item above it.
        const last = items.pop() as ListItem;
        items.push({ depth: last.depth, text: `${last.text} ${line.trim()}` });
      }
    }
    if (items.length > 0) {
      return renderList(items);
    }
  }
  if (lines.length >= 2 && lines.every((line) => line.trim().startsWith('|'))) {
    const table = renderTable(lines);
    if (table !== undefined) {
      return table;
    }
  }
  // A paragraph that begins with a list, as "**Based on:**\n- …" does: the lead line, then the list.
  const firstList = lines.findIndex((line) => LIST_LINE.test(line));
  if (firstList > 0 && lines.slice(firstList).every((line) => LIST_LINE.test(line) || /^ {2,}\S/.test(line))) {
    return renderBlock(lines.slice(0, firstList)) + renderBlock(lines.slice(firstList));
  }
  const heading = /^#{1,6}\s+(.*)$/.exec(lines[0] ?? '');
  if (heading !== null && lines.length === 1) {
    return `<p><strong>${renderInline(heading[1] ?? '')}</strong></p>`;
  }
  return `<p>${renderInline(lines.map((line) => line.trim()).join(' '))}</p>`;
}

/** Renders the service's Markdown as safe HTML. */
export function renderSafeMarkdown(markdown: string): HtmlFragment {
  const blocks: string[][] = [];
  let current: string[] = [];
  for (const line of markdown.replace(/\r\n?/g, '\n').split('\n')) {
    if (line.trim() === '') {
      if (current.length > 0) {
        blocks.push(current);
      }
      current = [];
    } else {
      current.push(line);
    }
  }
  if (current.length > 0) {
    blocks.push(current);
  }
  return new HtmlFragment(blocks.map(renderBlock).join('\n'));
}
