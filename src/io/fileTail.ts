/**
 * The end of a text file, for the warning about a file cut short: a file whose last byte is not a line break most
 * likely stopped mid-row (a copy or a write interrupted), and a cut inside the last number still reads as a number.
 */
import { closeSync, fstatSync, openSync, readSync } from 'node:fs';

/** Bytes read from the end of a file to show its last row. */
const TAIL_BYTES = 256;

/**
 * The last line of a non-empty file that does not end with a line break (without any earlier line; at most the last
 * TAIL_BYTES bytes), or undefined when the file ends with one, is empty or cannot be read.
 */
export function unterminatedLastLine(path: string): string | undefined {
  let fd: number | undefined;
  try {
    fd = openSync(path, 'r');
    const size = fstatSync(fd).size;
    if (size === 0) return undefined;
    const n = Math.min(TAIL_BYTES, size);
    const buf = Buffer.alloc(n);
    readSync(fd, buf, 0, n, size - n);
    if (buf[n - 1] === 10) return undefined;
    return buf.subarray(buf.lastIndexOf(10) + 1).toString('utf8');
  } catch {
    return undefined; // the reader reports unreadable files
  } finally {
    if (fd !== undefined) closeSync(fd);
  }
}
