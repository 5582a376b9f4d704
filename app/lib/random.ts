/**
 * Repeatable random numbers for rendered demo stacks, sensor noise and the statistical tests:
 * the same seed draws the same sequence on every machine, so a test run or a demo lab repeats
 * exactly. Not for anything secret (tokens use node:crypto).
 */

/**
 * Mulberry32 (Tommy Ettinger, 2017, public domain; from memory): 32 bits of state, uniform on [0, 1) with
 * 2⁻³² resolution. Small, fast and good enough for noise; not cryptographic.
 */
export function seededRandom(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Standard normal deviates from a uniform source by the Box–Muller transform (Box & Muller 1958, Ann. Math. Stat. 29, 610; from memory), cosine branch. */
export function gaussian(random: () => number): () => number {
  return () => {
    let u = 0;
    while (u === 0) u = random();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * random());
  };
}
