import { HeatpathError } from '../../../shared/errors/heatpath-error.js';
import { closestName } from '../../../shared/input/closest-name.js';
import type { TransientStore } from '../../store/transient-store.js';

/**
 * A sample id no upload was stored under: a 404, not an empty answer, so that a LIMS with a typo in the id hears of
 * it, with the stored sample id it most likely meant. The known ids are read only on this path.
 */
export async function unknownSampleError(store: TransientStore, sampleId: string): Promise<HeatpathError> {
  const known = [...new Set((await store.listUploadSummaries()).map((upload) => upload.sample_id))];
  const meant = closestName(sampleId, known);
  return new HeatpathError(
    'RESOURCE_NOT_FOUND',
    `sample ${sampleId} has no stored uploads${meant === undefined ? '.' : `: did you mean ${meant}?`} Sample ids are matched exactly, as the uploads gave them in sample_id`,
  );
}
