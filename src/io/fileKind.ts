/**
 * What a path names, checked before a file is read as data: a regular file, or a one-line reason why not. A
 * directory, a device, a FIFO or a socket is never opened as data (a FIFO would block, a device could stream
 * without end), nor is anything under /proc, /sys or /dev (kernel files that look regular but are not data and may
 * hold secrets, e.g. /proc/self/environ). Symbolic links are followed; the target is checked.
 */
import { accessSync, constants, realpathSync, statSync } from 'node:fs';

export type FileProblem = { kind: 'missing' | 'directory' | 'special' | 'kernel' | 'unreadable'; reason: string };

const KERNEL_ROOTS = ['/proc', '/sys', '/dev'];

/** null when `path` is a readable regular file; otherwise what it is instead, as a phrase ("is a directory"). */
export function fileProblem(path: string): FileProblem | null {
  let st;
  try {
    st = statSync(path);
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    if (code === 'ENOENT' || code === 'ENOTDIR') return { kind: 'missing', reason: 'not found' };
    if (code === 'EACCES') return { kind: 'unreadable', reason: 'cannot be read (permission denied)' };
    if (code === 'ELOOP') return { kind: 'unreadable', reason: 'cannot be read (a loop of symbolic links)' };
    return { kind: 'unreadable', reason: `cannot be read (${code ?? 'error'})` };
  }
  if (st.isDirectory()) return { kind: 'directory', reason: 'is a directory, not a file' };
  if (!st.isFile()) {
    const what = st.isFIFO() ? 'a FIFO (named pipe)' : st.isSocket() ? 'a socket' : st.isCharacterDevice() || st.isBlockDevice() ? 'a device' : 'not a regular file';
    return { kind: 'special', reason: `is ${what}, not a regular file; not read` };
  }
  let real = path;
  try {
    real = realpathSync(path);
  } catch {
    /* stat succeeded; keep the path */
  }
  if (KERNEL_ROOTS.some((r) => real === r || real.startsWith(r + '/'))) {
    return { kind: 'kernel', reason: `is a system file under ${KERNEL_ROOTS.find((r) => real.startsWith(r + '/'))}/, not a data file; not read` };
  }
  try {
    accessSync(path, constants.R_OK);
  } catch {
    return { kind: 'unreadable', reason: 'cannot be read (permission denied)' };
  }
  return null;
}
