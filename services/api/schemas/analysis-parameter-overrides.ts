import { Type } from 'typebox';
import { AnalysisParametersSchema } from '../../../shared/schemas/analysis-parameters.js';

/**
 * The shared analysis parameters as optional fields WITHOUT their defaults,
 * for requests that override some of them: fastify fills schema defaults in,
 * and a filled-in `kind: cooling` would override a heating file's `# kind:`
 * line (an upload) or the upload's own settings (a batch). What a request
 * leaves out comes from elsewhere; `fallback` says from where, for the docs.
 */
export function analysisParameterOverrides(fallback: (schemaDefault: string) => string) {
  const partial = Type.Partial(AnalysisParametersSchema).properties;
  return Object.fromEntries(
    Object.entries(partial).map(([name, field]) => {
      // A copy with every own property, TypeBox's non-enumerable markers (optional) included, less the default.
      const copy = Object.defineProperties({}, Object.getOwnPropertyDescriptors(field)) as { default?: unknown; description?: string };
      const schemaDefault = JSON.stringify(copy.default ?? 'automatic');
      delete copy.default;
      copy.description = `${copy.description ?? ''} ${fallback(schemaDefault)}`;
      return [name, copy];
    }),
  ) as unknown as typeof partial;
}
