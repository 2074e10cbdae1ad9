/**
 * A small deterministic sequence of numbers in [0, 1) (mulberry32, a public-domain 32-bit generator),
 * so the demo seed varies its feedback without Math.random: the same seed gives the same store.
 */
export function seededSequence(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4_294_967_296;
  };
}
