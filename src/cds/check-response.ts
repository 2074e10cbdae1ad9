/**
 * The CDS Hooks 2.0 response checklist (cds-hooks.md §5.3, mirroring the 3.0 invariants
 * cds-resp-1..6), applied to any JSON value. Returns one plain message per breach, each starting
 * with the path of the offending field; an empty list means the response passes. Pure.
 */

type Json = Readonly<Record<string, unknown>>;

const INDICATORS = ['info', 'warning', 'critical'];
const SELECTION_BEHAVIORS = ['at-most-one', 'any'];
const ACTION_TYPES = ['create', 'update', 'delete'];
const LINK_TYPES = ['absolute', 'smart'];

function isObject(value: unknown): value is Json {
  return typeof value === 'object' && value !== null && !Array.isArray(value);
}

function isText(value: unknown): value is string {
  return typeof value === 'string' && value.trim() !== '';
}

function array(value: unknown): readonly unknown[] {
  return Array.isArray(value) ? value : [];
}

/** §Use of JSON: no null and no empty string, array or object, except `{"cards": []}`. */
function checkNoEmpty(value: unknown, path: string, out: string[]): void {
  if (value === null) {
    out.push(`${path}: is null; omit an optional field that has no value`);
  } else if (typeof value === 'string' && value === '') {
    out.push(`${path}: is an empty string`);
  } else if (Array.isArray(value)) {
    if (value.length === 0 && path !== 'cards') {
      out.push(`${path}: is an empty array`);
    }
    value.forEach((item, index) => checkNoEmpty(item, `${path}[${index}]`, out));
  } else if (isObject(value)) {
    if (Object.keys(value).length === 0) {
      out.push(`${path}: is an empty object`);
    }
    for (const [key, inner] of Object.entries(value)) {
      checkNoEmpty(inner, path === '' ? key : `${path}.${key}`, out);
    }
  }
}

function checkAction(action: unknown, path: string, out: string[]): void {
  if (!isObject(action)) {
    out.push(`${path}: must be an object`);
    return;
  }
  if (!ACTION_TYPES.includes(action['type'] as string)) {
    out.push(`${path}.type: must be one of create, update, delete`);
  }
  if (!isText(action['description'])) {
    out.push(`${path}.description: is required`);
  }
  const resource = action['resource'];
  if ((action['type'] === 'create' || action['type'] === 'update') && !(isObject(resource) && isText(resource['resourceType']))) {
    out.push(`${path}.resource: is required; create and update actions carry the whole FHIR resource`);
  }
  if (action['type'] === 'delete') {
    if (!isText(action['resourceId'])) {
      out.push(`${path}.resourceId: is required for a delete action`);
    }
    if (resource !== undefined) {
      out.push(`${path}.resource: must be absent on a delete action`);
    }
  }
}

function checkCoding(coding: unknown, path: string, needsDisplay: boolean, out: string[]): void {
  if (!isObject(coding)) {
    out.push(`${path}: must be a Coding object`);
    return;
  }
  for (const key of needsDisplay ? ['code', 'system', 'display'] : ['code', 'system']) {
    if (!isText(coding[key])) {
      out.push(`${path}.${key}: is required`);
    }
  }
}

function checkSuggestions(card: Json, path: string, out: string[], uuids: Map<string, string>): void {
  const suggestions = card['suggestions'];
  if (suggestions === undefined) {
    return;
  }
  if (!SELECTION_BEHAVIORS.includes(card['selectionBehavior'] as string)) {
    out.push(`${path}.selectionBehavior: is required with suggestions and must be at-most-one or any`);
  }
  const list = array(suggestions);
  if (card['selectionBehavior'] === 'at-most-one' && list.filter((s) => isObject(s) && s['isRecommended'] === true).length > 1) {
    out.push(`${path}.suggestions: at most one suggestion may be recommended when selectionBehavior is at-most-one`);
  }
  list.forEach((suggestion, index) => {
    const at = `${path}.suggestions[${index}]`;
    if (!isObject(suggestion)) {
      out.push(`${at}: must be an object`);
      return;
    }
    if (!isText(suggestion['label'])) {
      out.push(`${at}.label: is required`);
    }
    claimUuid(suggestion['uuid'], `${at}.uuid`, out, uuids);
    array(suggestion['actions']).forEach((action, i) => checkAction(action, `${at}.actions[${i}]`, out));
  });
}

function claimUuid(uuid: unknown, path: string, out: string[], uuids: Map<string, string>): void {
  if (!isText(uuid)) {
    out.push(`${path}: is required (feedback needs it)`);
    return;
  }
  const earlier = uuids.get(uuid);
  if (earlier !== undefined) {
    out.push(`${path}: repeats the uuid of ${earlier}`);
  } else {
    uuids.set(uuid, path);
  }
}

function checkCard(card: unknown, path: string, out: string[], uuids: Map<string, string>): void {
  if (!isObject(card)) {
    out.push(`${path}: must be an object`);
    return;
  }
  claimUuid(card['uuid'], `${path}.uuid`, out, uuids);
  const summary = card['summary'];
  if (!isText(summary)) {
    out.push(`${path}.summary: is required`);
  } else if ([...summary].length >= 140) {
    out.push(`${path}.summary: must be fewer than 140 characters`);
  }
  if (!INDICATORS.includes(card['indicator'] as string)) {
    out.push(`${path}.indicator: must be one of info, warning, critical`);
  }
  const source = card['source'];
  if (!isObject(source) || !isText(source['label'])) {
    out.push(`${path}.source.label: is required`);
  }
  checkSuggestions(card, path, out, uuids);
  array(card['overrideReasons']).forEach((reason, index) =>
    checkCoding(reason, `${path}.overrideReasons[${index}]`, true, out),
  );
  array(card['links']).forEach((link, index) => {
    const at = `${path}.links[${index}]`;
    if (!isObject(link)) {
      out.push(`${at}: must be an object`);
      return;
    }
    if (!isText(link['label']) || !isText(link['url']) || !LINK_TYPES.includes(link['type'] as string)) {
      out.push(`${at}: needs label, url and a type of absolute or smart`);
    }
    if (link['appContext'] !== undefined && link['type'] !== 'smart') {
      out.push(`${at}.appContext: is allowed only on smart links`);
    }
  });
}

/** Checks a whole CDS Hooks response body against the §5.3 checklist. */
export function checkCdsResponse(body: unknown): readonly string[] {
  const out: string[] = [];
  if (!isObject(body) || !Array.isArray(body['cards'])) {
    return ['cards: is required and must be an array'];
  }
  const uuids = new Map<string, string>();
  body['cards'].forEach((card, index) => checkCard(card, `cards[${index}]`, out, uuids));
  array(body['systemActions']).forEach((action, index) => checkAction(action, `systemActions[${index}]`, out));
  checkNoEmpty(body, '', out);
  return out;
}
