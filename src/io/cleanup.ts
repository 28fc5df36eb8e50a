/**
 * Paths to remove if the process is stopped by a signal: the run's staging folder, a streamed file's temporary
 * name. Modules register what they create and unregister it once it is final; only the command-line entry installs
 * the signal handlers that call removeRegistered() (and exits), so library calls never exit the process.
 */
import { rmSync } from 'node:fs';

const registered = new Set<string>();

/** Registers `path` for removal on interrupt; returns the function that unregisters it. */
export function removeOnInterrupt(path: string): () => void {
  registered.add(path);
  return () => registered.delete(path);
}

/**
 * Removes every registered path (synchronously, as a signal handler must), the innermost first; a write still in
 * flight can add a file to a folder while it is removed, so a folder is tried again a few times. Returns the paths
 * removed and those that could not be.
 */
export function removeRegistered(): { removed: string[]; failed: string[] } {
  const removed: string[] = [], failed: string[] = [];
  for (const p of [...registered].sort((a, b) => b.length - a.length)) {
    try {
      rmSync(p, { recursive: true, force: true, maxRetries: 10, retryDelay: 20 });
      removed.push(p);
    } catch {
      failed.push(p);
    }
  }
  registered.clear();
  return { removed, failed };
}

/** What is registered now (tests). */
export function registeredPaths(): string[] {
  return [...registered];
}
