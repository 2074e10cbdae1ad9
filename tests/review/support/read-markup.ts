/**
 * Small readers for the review pages' own markup in tests: the attributes of every element that
 * carries a given data attribute. The pages are written by this service, one element per tag, with
 * double-quoted attributes, so a regular expression over a tag is enough here.
 */
export function elementsWith(markup: string, dataAttribute: string): Record<string, string>[] {
  const tags = [...markup.matchAll(new RegExp(`<[a-z]+\\b[^>]*\\s${dataAttribute}(?:[\\s=>])[^>]*>`, 'g'))];
  return tags.map((match) => {
    const attributes: Record<string, string> = {};
    for (const attr of match[0].matchAll(/\s([a-z0-9-]+)(?:="([^"]*)")?/g)) {
      attributes[attr[1] ?? ''] = attr[2] ?? '';
    }
    return attributes;
  });
}

/** The number in an attribute; fails the test if it is missing or not a number. */
export function numberAttr(attributes: Record<string, string>, name: string): number {
  const value = Number(attributes[name]);
  if (attributes[name] === undefined || Number.isNaN(value)) {
    throw new Error(`attribute ${name} is not a number: ${JSON.stringify(attributes)}`);
  }
  return value;
}

/** Decodes the entities escapeHtml writes, to compare shown text with stored text. */
export function decodeEntities(text: string): string {
  return text
    .replace(/&lt;/g, '<')
    .replace(/&gt;/g, '>')
    .replace(/&quot;/g, '"')
    .replace(/&#39;/g, "'")
    .replace(/&#96;/g, '`')
    .replace(/&amp;/g, '&');
}
