import { describe, expect, it } from 'vitest';
import { SILICON_DIE_SLAB, semiInfiniteZth, slabDiffusionTime_s, slabRth, slabZthByImages, slabZthBySeries } from './support/conduction-solutions.js';

// Checks the transcription of the Carslaw & Jaeger slab solutions the early-time tests rely on.
describe('slab conduction truth (Carslaw & Jaeger 1959)', () => {
  const diffusion = slabDiffusionTime_s(SILICON_DIE_SLAB);

  it('the image and eigenfunction forms agree where both converge', () => {
    for (const fraction of [0.05, 0.1, 0.3, 1]) {
      const t = fraction * diffusion;
      expect(slabZthByImages(SILICON_DIE_SLAB, t)).toBeCloseTo(slabZthBySeries(SILICON_DIE_SLAB, t, 2000), 14);
    }
  });

  it('starts on the semi-infinite sqrt(t) law and ends at Rth = L / (k A)', () => {
    const early = 1e-4 * diffusion;
    const semi = semiInfiniteZth(early, SILICON_DIE_SLAB.area_m2, SILICON_DIE_SLAB.conductivity_W_per_mK, SILICON_DIE_SLAB.volumetricHeat_J_per_m3K);
    expect(slabZthByImages(SILICON_DIE_SLAB, early) / semi - 1).toBeLessThan(1e-12);
    expect(slabZthBySeries(SILICON_DIE_SLAB, 20 * diffusion) / slabRth(SILICON_DIE_SLAB)).toBeCloseTo(1, 12);
  });
});
