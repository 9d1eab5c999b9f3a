/**
 * A reproducible stream of standard normal deviates, so that an estimator
 * that draws random samples stays a deterministic function of its input:
 * uniforms from mulberry32 (a 32-bit Weyl-sequence generator with an output
 * mix, public domain), normals by the Box-Muller transform (Box & Muller,
 * Ann. Math. Statist. 29, 1958).
 */
export function seededGaussian(seed: number): () => number {
  let state = seed >>> 0;
  const uniform = (): number => {
    state = (state + 0x6d2b79f5) >>> 0;
    let t = state;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
  return () => {
    // 1 - u keeps the logarithm finite: u is in [0, 1).
    const u = 1 - uniform();
    return Math.sqrt(-2 * Math.log(u)) * Math.cos(2 * Math.PI * uniform());
  };
}
