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

/** Removes every registered path (synchronously, as a signal handler must) and returns those removed. */
export function removeRegistered(): string[] {
  const done: string[] = [];
  for (const p of registered) {
    try {
      rmSync(p, { recursive: true, force: true });
      done.push(p);
    } catch {
      /* nothing more can be done while exiting */
    }
  }
  registered.clear();
  return done;
}

/** What is registered now (tests). */
export function registeredPaths(): string[] {
  return [...registered];
}
