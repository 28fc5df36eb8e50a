/**
 * Ctrl-C (SIGINT) and SIGTERM: remove what the command registered as unfinished (the run's staging folder, a
 * streamed file's temporary name; io/cleanup.ts), say so in one line on stderr, and exit with 128 + the signal
 * number (130, 143), as shells expect. Installed once by main.ts; a second signal while exiting changes nothing.
 */
import { relative, sep } from 'node:path';
import { interruptNotes, removeRegistered } from '../io/cleanup.ts';

const CODES = { SIGINT: 130, SIGTERM: 143 } as const;

let installed = false;

/** Removes what was registered as unfinished and returns the one line to print for `sig`. */
export function interruptLine(sig: keyof typeof CODES): string {
  const { removed: all, failed } = removeRegistered();
  // name the folders, not the files inside them
  const show = (list: string[]) => list.filter((p) => !all.some((q) => q !== p && p.startsWith(q + sep))).map((p) => relative(process.cwd(), p) || p);
  const removed = show(all);
  const notes = interruptNotes();
  return (
    `wakeplane: interrupted by ${sig}; ${removed.length ? `removed the unfinished ${removed.join(', ')}` : 'nothing unfinished to remove'}` +
    `${failed.length ? `; could not remove ${show(failed).join(', ')}` : ''}; ${notes.length ? notes.join('; ') : 'no result was written'}\n`
  );
}

export function installSignalHandlers(): void {
  if (installed) return;
  installed = true;
  for (const sig of Object.keys(CODES) as (keyof typeof CODES)[]) {
    process.on(sig, () => {
      const line = interruptLine(sig);
      if (process.stderr.isTTY) process.stderr.write('\r\x1b[2K');
      process.stderr.write(line);
      process.exit(CODES[sig]);
    });
  }
}
