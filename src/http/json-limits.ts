/**
 * Structural limits on untrusted JSON (hook request bodies and FHIR server responses), checked once
 * right after parsing and before anything else reads the value. The body size cap alone does not
 * protect the service: 1 MiB holds 100,000 levels of nesting, which overflows the stack of any
 * recursive walker (V8's own JSON.stringify failed at about 4,000 levels on Node 20 here), or a
 * 100,000-item list, or one text of a million characters that the order-text readers scan once per
 * mention they find in it.
 *
 * The walk is iterative (an explicit stack), so the check itself cannot overflow, and it stops at
 * the first breach.
 */

export interface JsonLimits {
  /** Levels of objects and arrays; the top-level value is level 1. */
  readonly maxDepth: number;
  /** Items in any one array. */
  readonly maxArrayItems: number;
  /** Characters in any one string or object key, except the keys in `longTextKeys`. */
  readonly maxStringChars: number;
  /** Keys whose string values only the body size limits (never read as order text). */
  readonly longTextKeys: ReadonlySet<string>;
}

/**
 * Real requests nest 10 to 12 levels, hold lists of a few hundred items and texts of a few hundred
 * characters (the Larkspur Bay examples; common practice for order text), so these leave room.
 * `div` is FHIR Narrative XHTML and `data` base64 Attachment content: neither is read as order text.
 */
export const JSON_LIMITS: JsonLimits = {
  maxDepth: 64,
  maxArrayItems: 10_000,
  maxStringChars: 4096,
  longTextKeys: new Set(['div', 'data']),
};

/** Draft orders signed together (order-sign) or shown together (order-select) in one call. */
export const MAX_DRAFT_ORDER_ENTRIES = 200;

export type JsonLimitKind = 'depth' | 'array' | 'string' | 'key';

export interface JsonLimitBreach {
  readonly kind: JsonLimitKind;
  /** Where, from the root: object keys and array indices. */
  readonly path: readonly (string | number)[];
}

interface Frame {
  readonly value: unknown;
  readonly depth: number;
  readonly parent: Frame | undefined;
  readonly key: string | number | undefined;
}

function pathOf(frame: Frame): (string | number)[] {
  const path: (string | number)[] = [];
  for (let at: Frame | undefined = frame; at?.key !== undefined; at = at.parent) {
    path.push(at.key);
  }
  return path.reverse();
}

/** The first place `value` exceeds `limits`, or undefined when it keeps within them. */
export function findJsonLimitBreach(value: unknown, limits: JsonLimits = JSON_LIMITS): JsonLimitBreach | undefined {
  return keepsWithin(value, limits) ? undefined : locateBreach(value, limits);
}

/**
 * Whether `value` keeps within `limits`: the same tests as `locateBreach`, run on every body, so it
 * allocates nothing per value (no frames, no paths) and never pushes a string or other leaf. Only a
 * body that breaks a limit is walked again to say where.
 */
function keepsWithin(value: unknown, limits: JsonLimits): boolean {
  const maxChars = limits.maxStringChars;
  if (typeof value === 'string') {
    return value.length <= maxChars;
  }
  if (value === null || typeof value !== 'object') {
    return true;
  }
  const values: object[] = [value];
  const depths: number[] = [1];
  for (let current = values.pop(); current !== undefined; current = values.pop()) {
    const depth = depths.pop() as number;
    if (depth > limits.maxDepth) {
      return false;
    }
    if (Array.isArray(current)) {
      if (current.length > limits.maxArrayItems) {
        return false;
      }
      for (const item of current as readonly unknown[]) {
        if (typeof item === 'string') {
          if (item.length > maxChars) {
            return false;
          }
        } else if (item !== null && typeof item === 'object') {
          values.push(item);
          depths.push(depth + 1);
        }
      }
      continue;
    }
    for (const key of Object.keys(current)) {
      if (key.length > maxChars) {
        return false;
      }
      const inner = (current as Readonly<Record<string, unknown>>)[key];
      if (typeof inner === 'string') {
        if (inner.length > maxChars && !limits.longTextKeys.has(key)) {
          return false;
        }
      } else if (inner !== null && typeof inner === 'object') {
        values.push(inner);
        depths.push(depth + 1);
      }
    }
  }
  return true;
}

/** The first breach in walking order, with its path; undefined when there is none. */
function locateBreach(value: unknown, limits: JsonLimits): JsonLimitBreach | undefined {
  const stack: Frame[] = [{ value, depth: 1, parent: undefined, key: undefined }];
  for (let frame = stack.pop(); frame !== undefined; frame = stack.pop()) {
    const current = frame.value;
    if (typeof current === 'string') {
      const exempt = typeof frame.key === 'string' && limits.longTextKeys.has(frame.key);
      if (!exempt && current.length > limits.maxStringChars) {
        return { kind: 'string', path: pathOf(frame) };
      }
      continue;
    }
    if (current === null || typeof current !== 'object') {
      continue;
    }
    if (frame.depth > limits.maxDepth) {
      return { kind: 'depth', path: pathOf(frame) };
    }
    if (Array.isArray(current)) {
      if (current.length > limits.maxArrayItems) {
        return { kind: 'array', path: pathOf(frame) };
      }
      for (let index = current.length - 1; index >= 0; index -= 1) {
        stack.push({ value: current[index] as unknown, depth: frame.depth + 1, parent: frame, key: index });
      }
      continue;
    }
    for (const key of Object.keys(current)) {
      if (key.length > limits.maxStringChars) {
        return { kind: 'key', path: pathOf(frame) };
      }
      const inner = (current as Readonly<Record<string, unknown>>)[key];
      stack.push({ value: inner, depth: frame.depth + 1, parent: frame, key });
    }
  }
  return undefined;
}

/** Path segments shown to a caller: FHIR-style element names and indices; anything else is `*`. */
const SHOWN_KEY = /^[A-Za-z_$][A-Za-z0-9_$-]{0,63}$/;
const SHOWN_SEGMENTS = 12;

/** The dot path of a breach as the error's issue names it, e.g. `context.draftOrders.entry`. */
export function describeBreachPath(path: readonly (string | number)[]): string {
  if (path.length === 0) {
    return '(root)';
  }
  const shown = path
    .slice(0, SHOWN_SEGMENTS)
    .map((segment) => (typeof segment === 'number' || SHOWN_KEY.test(segment) ? String(segment) : '*'));
  return path.length > SHOWN_SEGMENTS ? `${shown.join('.')}...` : shown.join('.');
}

/** The sentence an issue carries for a breach (limits only; never the value sent). */
export function describeBreach(kind: JsonLimitKind, limits: JsonLimits = JSON_LIMITS): string {
  switch (kind) {
    case 'depth':
      return `nests deeper than ${limits.maxDepth} levels`;
    case 'array':
      return `has more than ${limits.maxArrayItems} items`;
    case 'string':
      return `is longer than ${limits.maxStringChars} characters`;
    case 'key':
      return `has a key longer than ${limits.maxStringChars} characters`;
  }
}
