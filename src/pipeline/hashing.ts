/**
 * SHA-256 and size of the input files, computed in a worker thread so that hashing runs on the second core while
 * the main thread parses. A run may start hashing its data files before the command's modules load (cli/early.ts
 * guesses them from the campaign's text): hashFiles then takes each digest already under way, provided the file's
 * size and modification time are still those the digest was taken at, and hashes the others itself.
 */
import { statSync } from 'node:fs';
import { Worker } from 'node:worker_threads';

const WORKER = `
const { parentPort, workerData } = require('node:worker_threads');
const { createHash } = require('node:crypto');
const { closeSync, fstatSync, openSync, readSync, readlinkSync } = require('node:fs');
// Below the main thread in the scheduler (Linux: a thread's own nice value): the digests are awaited only at the end.
try {
  const tid = Number(readlinkSync('/proc/thread-self').split('/').pop());
  if (tid > 0) require('node:os').setPriority(tid, 10);
} catch { /* not Linux: same priority */ }
(async () => {
  // One buffer for every read (this thread only hashes, so blocking reads are fine): a stream's fresh buffer per
  // chunk stayed in memory until this thread's rare collections (about 60 MB over a 500 MB campaign).
  const buf = Buffer.allocUnsafe(1 << 20);
  for (const file of workerData.files) {
    try {
      const h = createHash('sha256');
      const fd = openSync(file, 'r');
      try {
        const st = fstatSync(fd);
        for (let n; (n = readSync(fd, buf, 0, buf.length, null)) > 0; ) h.update(buf.subarray(0, n));
        parentPort.postMessage({ file, bytes: st.size, mtimeMs: st.mtimeMs, sha256: h.digest('hex') });
      } finally {
        closeSync(fd);
      }
    } catch (e) {
      parentPort.postMessage({ file, bytes: -1, mtimeMs: NaN, sha256: '', error: String(e && e.message || e) });
    }
  }
})();
`;

export interface FileDigest {
  file: string;
  bytes: number;
  sha256: string;
  error?: string;
}

interface Pending {
  digest: Promise<FileDigest & { mtimeMs: number }>;
  worker: Worker;
}

/** Digests started and not yet taken by a run, by path. */
const started = new Map<string, Pending>();

/**
 * Starts hashing `files` (those not already under way) on a worker thread of their own, which keeps no process
 * alive by itself: a run that stops early does not wait for it.
 */
export function startHashing(files: string[]): void {
  const todo = [...new Set(files)].filter((f) => !started.has(f));
  if (!todo.length) return;
  const worker = new Worker(WORKER, { eval: true, workerData: { files: todo } });
  const settle = new Map<string, { resolve: (d: FileDigest & { mtimeMs: number }) => void; reject: (e: Error) => void }>();
  for (const file of todo) {
    const digest = new Promise<FileDigest & { mtimeMs: number }>((resolve, reject) => settle.set(file, { resolve, reject }));
    digest.catch(() => {}); // a guess nobody takes must not be an unhandled rejection
    started.set(file, { digest, worker });
  }
  worker.on('message', (m: FileDigest & { mtimeMs: number }) => {
    settle.get(m.file)?.resolve(m);
    settle.delete(m.file);
  });
  worker.once('error', (e) => { for (const s of settle.values()) s.reject(e); });
  worker.unref();
}

/** The digests of `files`, in order: those started earlier when the file is unchanged since, the others now. */
export async function hashFiles(files: string[]): Promise<FileDigest[]> {
  startHashing(files);
  const taken = files.map((f) => {
    const p = started.get(f)!;
    started.delete(f);
    return p;
  });
  const workers = new Set(taken.map((p) => p.worker));
  for (const w of workers) w.ref(); // awaited now: keep the process alive until the digests come
  try {
    const got = await Promise.all(taken.map((p) => p.digest));
    const stale = got.filter((d) => !d.error && !unchanged(d));
    const again = stale.length ? await hashFiles(stale.map((d) => d.file)) : [];
    return got.map((d) => again.find((a) => a.file === d.file) ?? strip(d));
  } finally {
    for (const w of workers) w.unref();
  }
}

/** True when the file still has the size and modification time its digest was taken at. */
function unchanged(d: { file: string; bytes: number; mtimeMs: number }): boolean {
  try {
    const st = statSync(d.file);
    return st.size === d.bytes && st.mtimeMs === d.mtimeMs;
  } catch {
    return false;
  }
}

function strip(d: FileDigest & { mtimeMs: number }): FileDigest {
  return d.error ? { file: d.file, bytes: d.bytes, sha256: d.sha256, error: d.error } : { file: d.file, bytes: d.bytes, sha256: d.sha256 };
}
