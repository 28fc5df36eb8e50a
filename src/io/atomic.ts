/**
 * Atomic file output: write to a temporary file beside the target, then rename over it. An interrupted run leaves
 * at most a stray `*.tmp` file, never a half-written result.
 */
import { mkdirSync, renameSync, writeFileSync, createWriteStream, rmSync, type WriteStream } from 'node:fs';
import { dirname } from 'node:path';

export function writeFileAtomic(path: string, data: string | Uint8Array): void {
  mkdirSync(dirname(path), { recursive: true });
  const tmp = `${path}.${process.pid}.tmp`;
  writeFileSync(tmp, data);
  renameSync(tmp, path);
}

/** A streamed text file that appears under its name only when closed successfully. */
export interface AtomicStream {
  write(text: string): void;
  close(): Promise<void>;
  abort(): void;
}

export function openAtomicStream(path: string): AtomicStream {
  mkdirSync(dirname(path), { recursive: true });
  const tmp = `${path}.${process.pid}.tmp`;
  const ws: WriteStream = createWriteStream(tmp);
  let failed: Error | undefined;
  ws.on('error', (e) => (failed = e));
  return {
    write(text: string) {
      if (failed) throw failed;
      ws.write(text);
    },
    close() {
      return new Promise((res, rej) => {
        ws.end(() => {
          if (failed) return rej(failed);
          try {
            renameSync(tmp, path);
            res();
          } catch (e) {
            rej(e as Error);
          }
        });
      });
    },
    abort() {
      ws.destroy();
      rmSync(tmp, { force: true });
    },
  };
}

/** Formats one CSV row: numbers with up to 6 significant decimals, NaN as empty, strings quoted when needed. */
export function csvRow(values: ReadonlyArray<string | number | boolean | null | undefined>): string {
  return (
    values
      .map((v) => {
        if (v === null || v === undefined) return '';
        if (typeof v === 'number') return Number.isFinite(v) ? String(Number(v.toPrecision(9))) : '';
        if (typeof v === 'boolean') return v ? '1' : '0';
        return /[",\n\r]/.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
      })
      .join(',') + '\n'
  );
}
