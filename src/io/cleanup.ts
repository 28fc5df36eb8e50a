/**
 * Paths to remove if the process is stopped by a signal: the run's staging folder, a streamed file's temporary
 * name. Modules register what they create and unregister it once it is final; only the command-line entry installs
 * the signal handlers that call removeRegistered() (and exits), so library calls never exit the process.
 */
import { rmSync } from 'node:fs';

const registered = new Set<string>();
/** Whole-removal attempts per path on interrupt, 25 ms apart. */
const REMOVE_ATTEMPTS = 20;
const pause = new Int32Array(new SharedArrayBuffer(4));
const stoppers = new Set<() => void>();

/**
 * Registers work to stop before the paths are removed on interrupt (a writer thread still creating files in the
 * staging folder would otherwise race the removal); returns the function that unregisters it.
 */
export function stopOnInterrupt(stop: () => void): () => void {
  stoppers.add(stop);
  return () => stoppers.delete(stop);
}

const notes = new Set<string>();

/**
 * Registers what the interrupt line must say about work that cannot be undone by a removal (render changes a finished
 * folder in place); returns the function that unregisters it.
 */
export function noteOnInterrupt(text: string): () => void {
  notes.add(text);
  return () => notes.delete(text);
}

/** The notes registered now (the interrupt line). */
export function interruptNotes(): string[] {
  return [...notes];
}

/** Registers `path` for removal on interrupt; returns the function that unregisters it. */
export function removeOnInterrupt(path: string): () => void {
  registered.add(path);
  return () => registered.delete(path);
}

/**
 * Stops the registered work (stopOnInterrupt), then removes every registered path (synchronously, as a signal
 * handler must), the innermost first; a write still in flight can add a file to a folder while it is removed, so a
 * path is tried again, whole, up to REMOVE_ATTEMPTS times. Returns the paths removed and those that could not be.
 */
export function removeRegistered(): { removed: string[]; failed: string[] } {
  const removed: string[] = [], failed: string[] = [];
  for (const stop of stoppers) {
    try {
      stop();
    } catch {
      // stopping is best effort; the removal below retries
    }
  }
  stoppers.clear();
  for (const p of [...registered].sort((a, b) => b.length - a.length)) {
    // A file whose asynchronous open was in flight (a write stream's, on libuv's thread pool) can appear after a
    // folder's listing: rmSync's own retries only repeat the last rmdir, so the whole removal is tried again.
    let ok = false;
    for (let attempt = 0; attempt < REMOVE_ATTEMPTS && !ok; attempt++) {
      try {
        rmSync(p, { recursive: true, force: true, maxRetries: 2, retryDelay: 10 });
        ok = true;
      } catch {
        Atomics.wait(pause, 0, 0, 25); // a synchronous pause of 25 ms (signal handlers cannot await)
      }
    }
    (ok ? removed : failed).push(p);
  }
  registered.clear();
  return { removed, failed };
}

/** What is registered now (tests). */
export function registeredPaths(): string[] {
  return [...registered];
}
