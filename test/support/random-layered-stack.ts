import type { LayeredStack, StackLayer } from '../../shared/models/layered-stack.js';

/**
 * Seeded random layered stacks of the two families the accuracy target names:
 * power modules (a die on a DBC substrate, sometimes on a copper baseplate)
 * and discrete parts (a die on a copper tab), each on a thermal interface and
 * an aluminium heatsink with a convection resistance. Nothing here is tuned
 * to the analysis: layer materials, thicknesses, die size and sink resistance
 * are drawn from the ranges below.
 *
 * Material values: typical handbook figures near room temperature (memory),
 * conductivity k in W/(m K) and volumetric heat capacity c_v in J/(m^3 K):
 * Si 148 / 1.64e6, 4H-SiC 370 / 2.21e6, GaN 130 / 3.0e6, SAC305 58 / 1.70e6,
 * sintered silver 200 / 2.0e6, Cu 398 / 3.45e6, AlN 170 / 2.41e6, Al2O3 (96 %)
 * 24 / 3.30e6, Si3N4 90 / 2.24e6, thermal grease 3 / 2.5e6, gap pad
 * 1.5 / 2.6e6, Al 6061 167 / 2.42e6. Cross-sections grow by the 45-degree
 * spreading rule of thumb (common practice), except across the die.
 */
type Material = Pick<StackLayer, 'conductivity_W_per_mK' | 'volumetric_heat_capacity_J_per_m3K'>;
const material = (conductivity_W_per_mK: number, volumetric_heat_capacity_J_per_m3K: number): Material => ({ conductivity_W_per_mK, volumetric_heat_capacity_J_per_m3K });
const DIES = { Si: material(148, 1.64e6), SiC: material(370, 2.21e6), GaN: material(130, 3.0e6) };
const ATTACHES = { SAC305: material(58, 1.7e6), 'sintered Ag': material(200, 2.0e6) };
const CERAMICS = { AlN: material(170, 2.41e6), Al2O3: material(24, 3.3e6), Si3N4: material(90, 2.24e6) };
const INTERFACES = { grease: material(3, 2.5e6), 'gap pad': material(1.5, 2.6e6) };
const COPPER = material(398, 3.45e6);
const SOLDER = ATTACHES.SAC305;
const ALUMINIUM = material(167, 2.42e6);

export function randomLayeredStack(random: () => number, name: string): LayeredStack {
  const uniform = (low: number, high: number) => low + (high - low) * random();
  const pick = <T>(choices: Record<string, T>): [string, T] => {
    const entries = Object.entries(choices);
    return entries[Math.floor(random() * entries.length)];
  };
  const layers: StackLayer[] = [];
  let side_m = uniform(2e-3, 12e-3);
  const add = (layerName: string, m: Material, thickness_m: number, spreads = true) => {
    const end_m = spreads ? side_m + 2 * thickness_m : side_m;
    layers.push({ name: layerName, thickness_m, ...m, area_start_m2: side_m ** 2, area_end_m2: end_m ** 2 });
    side_m = end_m;
  };
  const [dieName, die] = pick(DIES);
  add(`${dieName} die`, die, uniform(80e-6, 400e-6), false);
  const [attachName, attach] = pick(ATTACHES);
  add(`${attachName} die attach`, attach, uniform(20e-6, 120e-6));
  const module = random() < 0.6;
  if (module) {
    const [ceramicName, ceramic] = pick(CERAMICS);
    add('DBC top copper', COPPER, uniform(200e-6, 400e-6));
    add(`DBC ${ceramicName}`, ceramic, uniform(250e-6, 650e-6));
    add('DBC bottom copper', COPPER, uniform(200e-6, 400e-6));
    if (random() < 0.5) {
      add('baseplate solder', SOLDER, uniform(50e-6, 150e-6));
      add('copper baseplate', COPPER, uniform(2e-3, 5e-3));
    }
  } else {
    add('copper tab', COPPER, uniform(1e-3, 3e-3));
  }
  const [interfaceName, thermalInterface] = pick(INTERFACES);
  add(interfaceName, thermalInterface, uniform(25e-6, 200e-6));
  add('aluminium heatsink', ALUMINIUM, uniform(3e-3, 10e-3));
  return { name: `${name} (${module ? 'module' : 'discrete'}, ${dieName})`, layers, sink_resistance_K_per_W: uniform(0.05, 0.6) };
}
