import type { LayeredStack } from '../../shared/models/layered-stack.js';

/** The stack with one layer's conductivity scaled: a cracked die attach, a dry interface. */
export function withLayerConductivity(stack: LayeredStack, layerName: string, factor: number): LayeredStack {
  if (!stack.layers.some((layer) => layer.name === layerName)) throw new Error(`${stack.name} has no layer "${layerName}"`);
  return {
    ...stack,
    name: `${stack.name}, ${layerName} at ${Math.round(factor * 100)} % conductivity`,
    layers: stack.layers.map((layer) => (layer.name === layerName ? { ...layer, conductivity_W_per_mK: layer.conductivity_W_per_mK * factor } : layer)),
  };
}
