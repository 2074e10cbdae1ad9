import { readdirSync, readFileSync } from 'node:fs';
import { parseCardTemplate, type CardTemplate, type CardTemplates } from '../../../src/cds/card-templates.js';

/** Reads every `cards/<rule-id>.yaml` of the repository (tests only; the shells load them at start-up). */
export function loadRepositoryCards(): CardTemplates {
  const dir = new URL('../../../cards/', import.meta.url);
  const templates = new Map<string, CardTemplate>();
  for (const name of readdirSync(dir).filter((n) => n.endsWith('.yaml'))) {
    const parsed = parseCardTemplate(readFileSync(new URL(name, dir), 'utf8'));
    if (parsed.kind !== 'ok') {
      throw new Error(`cards/${name} does not parse: ${JSON.stringify(parsed.problems)}`);
    }
    templates.set(name.replace(/\.yaml$/, ''), parsed.template);
  }
  return templates;
}
