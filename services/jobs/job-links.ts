/** Where a job's state, result and artifacts are served, relative to the service's base URL. */
export function jobLinks(jobId: string): { self: string; result: string; artifacts: string } {
  return { self: `/v1/jobs/${jobId}`, result: `/v1/jobs/${jobId}/result`, artifacts: `/v1/jobs/${jobId}/artifacts` };
}
