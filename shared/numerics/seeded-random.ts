/**
 * Seeded pseudo-random numbers: the one generator of the project, for
 * estimators that draw random samples (which stay deterministic functions of
 * their input) and for reproducible test noise.
 *
 * createRandom: mulberry32 (Tommy Ettinger's 32-bit generator: a Weyl
 * sequence with an output mix, public domain), uniform on [0, 1). gaussian:
 * the Box-Muller transform (Box & Muller, Ann. Math. Statist. 29, 1958),
 * standard normal.
 */
export function createRandom(seed: number): () => number {
  let state = seed >>> 0;
  return () => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** One standard normal deviate from two uniforms (Box-Muller, cosine branch). */
export function gaussian(random: () => number): number {
  // 1 - u keeps the logarithm finite: u is in [0, 1), so 1 - u is in (0, 1].
  const u = 1 - random();
  const v = random();
  return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * v);
}
