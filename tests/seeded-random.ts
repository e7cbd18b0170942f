/**
 * A seeded pseudo-random number generator (mulberry32, a public-domain 32-bit generator): the same
 * seed gives the same positions on every run, so a test that samples positions can be repeated.
 */
export function mulberry32(state: number): () => number {
  return () => {
    state = (state + 0x6d2b79f5) | 0;
    let t = Math.imul(state ^ (state >>> 15), 1 | state);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}
