import { describe, expect, it } from 'vitest';
import { fosterFromSpectrum, NEGLIGIBLE_STAGE_FRACTION } from '../shared/numerics/foster-from-spectrum.js';
import { zthFromFoster } from '../shared/numerics/foster-zth.js';
import { catchHeatpathError } from './support/catch-heatpath-error.js';

describe('fosterFromSpectrum', () => {
  it('makes each bin a Foster stage and leaves out negligible ones', () => {
    const tau_s = Float64Array.from([1e-4, 1e-3, 1e-2, 1e-1]);
    const r_K_per_W = Float64Array.from([0.2, 0.5 * NEGLIGIBLE_STAGE_FRACTION, 0.3, 0.5]);
    const foster = fosterFromSpectrum(tau_s, r_K_per_W);
    expect(Array.from(foster.tau_s)).toEqual([1e-4, 1e-2, 1e-1]);
    expect(Array.from(foster.r_K_per_W)).toEqual([0.2, 0.3, 0.5]);
    // The network's step response ends at the sum of R (Foster partial-fraction form,
    // Zth(t) = sum R_i (1 - exp(-t / tau_i)) -> sum R_i as t -> infinity).
    expect(zthFromFoster(foster.r_K_per_W, foster.tau_s, Float64Array.from([1e3]))[0]).toBeCloseTo(1, 12);
  });

  it('refuses an empty spectrum', () => {
    expect(catchHeatpathError(() => fosterFromSpectrum(Float64Array.from([1, 2]), Float64Array.from([0, 0]))).code).toBe('ANALYSIS_NOT_ANALYSABLE');
  });
});
