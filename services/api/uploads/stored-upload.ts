import { HeatpathError } from '../../../shared/errors/heatpath-error.js';
import type { UploadRecord } from '../../store/store-records.js';
import type { TransientStore } from '../../store/transient-store.js';

/** The upload a route's :upload_id names; 404 RESOURCE_NOT_FOUND when none is stored under it. */
export async function storedUpload(store: TransientStore, uploadId: string): Promise<UploadRecord> {
  const upload = await store.getUpload(uploadId);
  if (!upload) throw new HeatpathError('RESOURCE_NOT_FOUND', `upload ${uploadId} is not stored`);
  return upload;
}
