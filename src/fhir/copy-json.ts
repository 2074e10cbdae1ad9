/**
 * A deep copy of a JSON value, equal to `JSON.parse(JSON.stringify(value))`, written out because a
 * suggestion copies its whole order on every call and the round trip builds and parses a string of it.
 * Anything the direct copy is not sure to copy exactly as the round trip would (a `toJSON` method, a
 * class instance, a BigInt, nesting deeper than {@link DIRECT_COPY_DEPTH}) is handed to the round trip
 * itself, which also keeps its errors (a cycle, nesting too deep to serialise) for the caller to catch.
 */

/** Orders nest a few levels; deeper values are left to the round trip and its own limits. */
const DIRECT_COPY_DEPTH = 64;

/** Thrown inside the direct copy when a value needs the round trip; made once, as it is never shown. */
class NeedsRoundTrip extends Error {}
const NEEDS_ROUND_TRIP = new NeedsRoundTrip('needs the JSON round trip');

/** The copy, or what the JSON round trip throws. `undefined` alone has no JSON text and is returned as is. */
export function copyJson(value: unknown): unknown {
  try {
    return copyValue(value, 0);
  } catch (error) {
    if (error !== NEEDS_ROUND_TRIP) {
      throw error;
    }
    const text = JSON.stringify(value) as string | undefined;
    return text === undefined ? undefined : (JSON.parse(text) as unknown);
  }
}

/** The copy of a value in an object or at the top; `undefined` where JSON would leave it out. */
function copyValue(value: unknown, depth: number): unknown {
  switch (typeof value) {
    case 'string':
    case 'boolean':
      return value;
    case 'number':
      // JSON writes -0 as 0 and has no NaN or infinities (they become null).
      return Number.isFinite(value) ? (value === 0 ? 0 : value) : null;
    case 'undefined':
    case 'function':
    case 'symbol':
      return undefined;
    case 'bigint':
      throw NEEDS_ROUND_TRIP;
    case 'object':
      return copyObject(value, depth);
  }
}

function copyObject(value: object | null, depth: number): unknown {
  if (value === null) {
    return null;
  }
  if (depth >= DIRECT_COPY_DEPTH) {
    throw NEEDS_ROUND_TRIP;
  }
  if (Array.isArray(value)) {
    return value.map((item: unknown) => copyValue(item, depth + 1) ?? null);
  }
  const prototype = Object.getPrototypeOf(value) as unknown;
  if ((prototype !== Object.prototype && prototype !== null) || 'toJSON' in value) {
    throw NEEDS_ROUND_TRIP;
  }
  const copy: Record<string, unknown> = {};
  // The own keys in the order Object.entries lists them (the prototype was checked above), without an
  // array of entries made for every object of the order.
  for (const key in value) {
    if (!Object.hasOwn(value, key)) {
      continue;
    }
    const copied = copyValue((value as Record<string, unknown>)[key], depth + 1);
    if (copied === undefined) {
      continue;
    }
    if (key === '__proto__') {
      // Assigning would set the prototype; JSON.parse makes it an own key, and so does this.
      Object.defineProperty(copy, key, { value: copied, writable: true, enumerable: true, configurable: true });
    } else {
      copy[key] = copied;
    }
  }
  return copy;
}
