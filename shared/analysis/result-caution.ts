/** The caution every result carries: it travels with the numbers into other systems. */
export const RESULT_CAUTION =
  'Engineering estimate from a thermal transient measurement. It informs qualification and design margins only together with ' +
  'the applicable standards (JESD51-1, JESD51-14, AQG 324), repeat measurements and review under qualified lab practice; ' +
  'the time-constant spectrum and structure functions are solutions of an ill-posed inverse problem with noise-limited resolution.';
