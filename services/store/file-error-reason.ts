/** A file-system error in a few words a user can act on, as met while reading a file or while writing one (and its folders). */
export function fileErrorReason(error: unknown, access: 'read' | 'write' = 'write'): string {
  const code = (error as NodeJS.ErrnoException | undefined)?.code;
  switch (code) {
    case 'ENOENT':
      return access === 'read' ? 'no such file' : 'a parent folder is missing or cannot hold folders';
    case 'ENOTDIR':
      return 'a parent is a file, not a folder';
    case 'EISDIR':
      return 'it is a directory';
    case 'EACCES':
    case 'EPERM':
      return 'permission denied';
    case 'EROFS':
      return 'read-only file system';
    case 'ENOSPC':
      return 'no space left on the device';
    case 'EDQUOT':
      return 'disk quota exceeded';
    default:
      return code ?? (error instanceof Error ? error.message : String(error));
  }
}
