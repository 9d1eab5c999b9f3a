import {
  access as accessCallback,
  accessSync,
  close as closeCallback,
  closeSync,
  fsync as fsyncCallback,
  fsyncSync,
  linkSync,
  mkdirSync,
  open as openCallback,
  openSync,
  readdirSync,
  readFileSync,
  renameSync,
  statSync,
  unlinkSync,
  writeFile as writeFileCallback,
  writeFileSync,
} from 'node:fs';
import { link, mkdir, readdir, readFile, rename, stat, unlink } from 'node:fs/promises';
import { promisify } from 'node:util';

/**
 * The file calls the store makes, in one of two kinds with the same meaning
 * (and the same errors, with code and syscall): the store's algorithms
 * (atomic-file.ts, store-files.ts) await them either way.
 *
 * - `asyncStoreIo`, the default: the API serves many requests at once, and a
 *   blocking write or fsync would stall all of them.
 * - `blockingStoreIo`: the analysis processes (workers/analysis-processor.ts)
 *   do one job at a time and nothing else meanwhile, so a blocking call costs
 *   them no waiting and less CPU: measured inside them during
 *   `bench:service --rate 0` (Node 20, ext4), a job's store I/O (its result,
 *   upload, raw bytes and kept parse read, its 204 kB result written durably,
 *   the webhook registrations listed) took 2.9 ms of CPU blocking against
 *   4.6-4.7 ms with the promise API, of which 1.2 ms is JSON.stringify.
 */
export interface StoreIo {
  /** Opens for reading ('r') or creates a new file, failing when it exists ('wx'), with `mode` (default 0o666, less the umask); returns the descriptor. */
  open(path: string, flags: 'r' | 'wx', mode?: number): number | Promise<number>;
  /** Writes all of `bytes` at the descriptor's position. */
  writeAll(fd: number, bytes: Uint8Array | string): void | Promise<void>;
  fsync(fd: number): void | Promise<void>;
  close(fd: number): void | Promise<void>;
  readFile(path: string): Uint8Array | Promise<Uint8Array>;
  readdir(path: string): string[] | Promise<string[]>;
  access(path: string): void | Promise<void>;
  /** Creates one folder (not its parents), with `mode` (default 0o777, less the umask). */
  mkdir(path: string, mode?: number): unknown;
  isDirectory(path: string): boolean | Promise<boolean>;
  link(existing: string, created: string): void | Promise<void>;
  rename(from: string, to: string): void | Promise<void>;
  unlink(path: string): void | Promise<void>;
}

export const asyncStoreIo: StoreIo = {
  open: promisify(openCallback),
  writeAll: promisify(writeFileCallback) as (fd: number, bytes: Uint8Array | string) => Promise<void>,
  fsync: promisify(fsyncCallback),
  close: promisify(closeCallback),
  readFile: (path) => readFile(path),
  readdir: (path) => readdir(path),
  access: promisify(accessCallback),
  mkdir: (path, mode) => mkdir(path, mode),
  isDirectory: async (path) => (await stat(path)).isDirectory(),
  link,
  rename,
  unlink,
};

export const blockingStoreIo: StoreIo = {
  open: (path, flags, mode) => openSync(path, flags, mode),
  writeAll: (fd, bytes) => writeFileSync(fd, bytes),
  fsync: fsyncSync,
  close: closeSync,
  readFile: (path) => readFileSync(path),
  readdir: (path) => readdirSync(path),
  access: (path) => accessSync(path),
  mkdir: (path, mode) => mkdirSync(path, mode),
  isDirectory: (path) => statSync(path).isDirectory(),
  link: linkSync,
  rename: renameSync,
  unlink: unlinkSync,
};
