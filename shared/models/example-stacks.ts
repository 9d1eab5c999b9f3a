/**
 * Example layered stacks for synthetic transients and truth tests.
 *
 * Material values are typical handbook figures near room temperature
 * (memory): thermal conductivity k, volumetric heat capacity c_v = rho c.
 *   Si       k 148, rho 2330, c 705   (c_v 1.64e6)
 *   4H-SiC   k 370, rho 3210, c 690   (c_v 2.21e6)
 *   SAC305   k 58,  rho 7400, c 230   (c_v 1.70e6)
 *   Cu       k 398, rho 8960, c 385   (c_v 3.45e6)
 *   Si3N4    k 90,  rho 3250, c 690   (c_v 2.24e6)
 *   Al2O3 96% k 24, rho 3750, c 880   (c_v 3.30e6)
 *   Al 6061  k 167, rho 2700, c 896   (c_v 2.42e6)
 *   grease   k 3,   c_v 2.5e6;  gap pad k 1.5, c_v 2.6e6
 * Cross-sections grow by the 45-degree spreading rule of thumb (common
 * practice): the side of a square footprint grows by twice the layer
 * thickness, capped where a layer ends. Sink resistances are effective
 * convection figures (memory): a water-cooled cold plate, h ~ 3000 W/(m^2 K)
 * over the spread footprint; a small forced-air heatsink of about 0.45 K/W.
 */
import type { LayeredStack, StackLayer } from './layered-stack.js';

const SILICON = { conductivity_W_per_mK: 148, volumetric_heat_capacity_J_per_m3K: 2330 * 705 };
const SILICON_CARBIDE = { conductivity_W_per_mK: 370, volumetric_heat_capacity_J_per_m3K: 3210 * 690 };
const SAC305_SOLDER = { conductivity_W_per_mK: 58, volumetric_heat_capacity_J_per_m3K: 7400 * 230 };
const COPPER = { conductivity_W_per_mK: 398, volumetric_heat_capacity_J_per_m3K: 8960 * 385 };
const SILICON_NITRIDE = { conductivity_W_per_mK: 90, volumetric_heat_capacity_J_per_m3K: 3250 * 690 };
const ALUMINIUM_6061 = { conductivity_W_per_mK: 167, volumetric_heat_capacity_J_per_m3K: 2700 * 896 };
const THERMAL_GREASE = { conductivity_W_per_mK: 3, volumetric_heat_capacity_J_per_m3K: 2.5e6 };

type Material = Pick<StackLayer, 'conductivity_W_per_mK' | 'volumetric_heat_capacity_J_per_m3K'>;

function layer(name: string, material: Material, thickness_m: number, side_start_m: number, side_end_m: number): StackLayer {
  return { name, thickness_m, ...material, area_start_m2: side_start_m ** 2, area_end_m2: side_end_m ** 2 };
}

/**
 * One 4 x 4 mm SiC MOSFET die of a power module on a Si3N4 DBC, soldered to a
 * 3 mm copper baseplate, greased onto an aluminium cold plate.
 * Rth about 1.17 K/W; slowest tau about 3.7 s, so Zth is at its final value by 100 s.
 */
export const SIC_POWER_MODULE_STACK: LayeredStack = {
  name: 'SiC power module on a cold plate',
  layers: [
    layer('SiC die', SILICON_CARBIDE, 180e-6, 4.0e-3, 4.0e-3),
    layer('die attach solder', SAC305_SOLDER, 70e-6, 4.0e-3, 4.0e-3),
    layer('DBC top copper', COPPER, 300e-6, 4.0e-3, 4.6e-3),
    layer('DBC Si3N4 ceramic', SILICON_NITRIDE, 320e-6, 4.6e-3, 5.24e-3),
    layer('DBC bottom copper', COPPER, 300e-6, 5.24e-3, 5.84e-3),
    layer('baseplate solder', SAC305_SOLDER, 100e-6, 5.84e-3, 6.04e-3),
    layer('copper baseplate', COPPER, 3e-3, 6.04e-3, 12.04e-3),
    layer('thermal grease', THERMAL_GREASE, 50e-6, 12.04e-3, 12.14e-3),
    layer('aluminium cold plate', ALUMINIUM_6061, 8e-3, 12.14e-3, 28.14e-3),
  ],
  sink_resistance_K_per_W: 1 / (3000 * 28.14e-3 ** 2),
};

/**
 * A discrete TO-247-like part: 5.5 x 5.5 mm silicon die soldered to the
 * copper tab, greased onto the base of a forced-air aluminium heatsink.
 * Rth about 1.06 K/W; slowest tau about 10 s, so Zth is within 1e-4 of Rth at 100 s.
 */
export const TO247_ON_HEATSINK_STACK: LayeredStack = {
  name: 'TO-247-like part on a forced-air heatsink',
  layers: [
    layer('Si die', SILICON, 250e-6, 5.5e-3, 5.5e-3),
    layer('die attach solder', SAC305_SOLDER, 50e-6, 5.5e-3, 5.6e-3),
    layer('copper tab', COPPER, 2e-3, 5.6e-3, 9.6e-3),
    layer('thermal grease', THERMAL_GREASE, 50e-6, 9.6e-3, 9.7e-3),
    layer('heatsink base', ALUMINIUM_6061, 6e-3, 9.7e-3, 21.7e-3),
    layer('heatsink body', ALUMINIUM_6061, 8e-3, 21.7e-3, 37.7e-3),
  ],
  sink_resistance_K_per_W: 0.45,
};
