/**
 * `build(key)`, built once for each key object and kept while that object lives. For values that
 * depend on a frozen object alone (a parsed policy, its site, a policy snapshot): a reload makes new
 * objects, so a WeakMap keyed on them can never serve a stale value, and drops its entries with them.
 */
export function oncePerObject<K extends object, T>(build: (key: K) => T): (key: K) => T {
  // The value is boxed so that a build answering undefined is remembered too.
  const built = new WeakMap<K, { readonly value: T }>();
  return (key) => {
    let entry = built.get(key);
    if (entry === undefined) {
      entry = { value: build(key) };
      built.set(key, entry);
    }
    return entry.value;
  };
}
