/**
 * File-system failures of the store itself: the data directory is full,
 * read-only, gone or refused. They say nothing about the input, so a request
 * that meets one is answered 503, and a job that fails of one is not failed
 * for good: no failure record is written, and the recovery sweep runs it
 * again once the store has room.
 */
const STORE_OUTAGE_CODES: ReadonlySet<string> = new Set(['ENOSPC', 'EDQUOT', 'EROFS', 'EACCES', 'EPERM', 'ENOTDIR', 'ENOENT', 'EIO']);

/** Whether `error` is such a failure: by its code, or by the message a sandboxed processor's error keeps of it ("ENOSPC: no space left on device, write"). */
export function isStoreOutage(error: unknown): boolean {
  if (!(error instanceof Error)) return false;
  const code = (error as NodeJS.ErrnoException).code;
  if (code !== undefined) return STORE_OUTAGE_CODES.has(code) && 'syscall' in error;
  const prefix = /^([A-Z]+): /.exec(error.message)?.[1];
  return prefix !== undefined && STORE_OUTAGE_CODES.has(prefix);
}
