/**
 * The log-time kernel of one thermal time constant.
 *
 * A single RC term R (1 - exp(-t / tau)) written in z = ln t and
 * zeta = ln tau has the step response s(z - zeta) = 1 - exp(-exp(z - zeta))
 * and the derivative w(z - zeta) = exp((z - zeta) - exp(z - zeta)); a network
 * with time-constant spectrum R(zeta) gives da/dz = R (x) w and a = R (x) s
 * (Szekely & Van Bien, Solid-State Electronics 31, 1988). w integrates to 1,
 * peaks at z = 0 with 1/e, and its Fourier transform is Gamma(1 - i Omega).
 */

/** w(x) = exp(x - exp(x)): the log-time derivative of a unit time constant. */
export function timeConstantKernel(x: number): number {
  return Math.exp(x - Math.exp(x));
}

/** s(x) = 1 - exp(-exp(x)): the log-time step response of a unit time constant. */
export function timeConstantStepResponse(x: number): number {
  // -expm1(-u) keeps full relative precision for the small responses of time
  // constants far beyond the data (u = exp(x) << 1).
  return -Math.expm1(-Math.exp(x));
}
