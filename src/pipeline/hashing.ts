/**
 * SHA-256 and size of the input files, computed in a worker thread so that hashing runs on the second core while
 * the main thread parses.
 */
import { Worker } from 'node:worker_threads';

const WORKER = `
const { parentPort, workerData } = require('node:worker_threads');
const { createHash } = require('node:crypto');
const { closeSync, openSync, readSync, readlinkSync, statSync } = require('node:fs');
// Below the main thread in the scheduler (Linux: a thread's own nice value): the digests are awaited only at the end.
try {
  const tid = Number(readlinkSync('/proc/thread-self').split('/').pop());
  if (tid > 0) require('node:os').setPriority(tid, 10);
} catch { /* not Linux: same priority */ }
(async () => {
  const out = [];
  // One buffer for every read (this thread only hashes, so blocking reads are fine): a stream's fresh buffer per
  // chunk stayed in memory until this thread's rare collections (about 60 MB over a 500 MB campaign).
  const buf = Buffer.allocUnsafe(1 << 20);
  for (const file of workerData.files) {
    try {
      const h = createHash('sha256');
      const fd = openSync(file, 'r');
      try {
        for (let n; (n = readSync(fd, buf, 0, buf.length, null)) > 0; ) h.update(buf.subarray(0, n));
      } finally {
        closeSync(fd);
      }
      out.push({ file, bytes: statSync(file).size, sha256: h.digest('hex') });
    } catch (e) {
      out.push({ file, bytes: -1, sha256: '', error: String(e && e.message || e) });
    }
  }
  parentPort.postMessage(out);
})();
`;

export interface FileDigest {
  file: string;
  bytes: number;
  sha256: string;
  error?: string;
}

export function hashFiles(files: string[]): Promise<FileDigest[]> {
  return new Promise((resolve, reject) => {
    const w = new Worker(WORKER, { eval: true, workerData: { files } });
    w.once('message', (m: FileDigest[]) => resolve(m));
    w.once('error', reject);
  });
}
