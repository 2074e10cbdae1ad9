import { readFileSync } from 'node:fs';

/** Reads a JSON fixture from tests/fixtures, e.g. `loadJsonFixture('cds/order-sign-request.json')`. */
export function loadJsonFixture(relativePath: string): unknown {
  return JSON.parse(readFileSync(new URL(`../fixtures/${relativePath}`, import.meta.url), 'utf8')) as unknown;
}

/** A deep copy of a JSON value, so a test can break one field without touching the fixture. */
export function cloneJson<T>(value: T): T {
  return structuredClone(value);
}
