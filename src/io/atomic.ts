/**
 * Atomic file output: write to a temporary file beside the target, then rename over it. An interrupted run leaves
 * at most a stray `*.tmp` file, never a half-written result.
 */
import { mkdirSync, renameSync, writeFileSync, createWriteStream, rmSync, type WriteStream } from 'node:fs';
import { dirname } from 'node:path';
import { removeOnInterrupt } from './cleanup.ts';

export function writeFileAtomic(path: string, data: string | Uint8Array): void {
  const tmp = `${path}.${process.pid}.tmp`;
  try {
    writeFileSync(tmp, data);
  } catch (e) {
    // The folder is made only when missing (a run writes hundreds of files into folders that exist).
    if ((e as NodeJS.ErrnoException).code !== 'ENOENT') throw e;
    mkdirSync(dirname(path), { recursive: true });
    writeFileSync(tmp, data);
  }
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
  const unregister = removeOnInterrupt(tmp); // a signal mid-write leaves no stray temporary file
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
            unregister();
            res();
          } catch (e) {
            rej(e as Error);
          }
        });
      });
    },
    abort() {
      unregister();
      ws.destroy();
      rmSync(tmp, { force: true });
    },
  };
}

const NEEDS_QUOTES = /[",\n\r]/;

/**
 * Formats one CSV row: numbers rounded to 9 significant digits and written in the shortest form that reads back as
 * that rounded value (String(Number(x.toPrecision(9))), ECMA-262 Number::toString), NaN and infinities as empty,
 * booleans as 1/0, strings quoted when they hold a quote, comma or line break (RFC 4180). Integers below 1e9 are
 * their own 9-digit rounding and skip toPrecision (field tables are written row by row for every cell).
 */
export function csvRow(values: ReadonlyArray<string | number | boolean | null | undefined>): string {
  let out = '';
  for (let k = 0; k < values.length; k++) {
    if (k > 0) out += ',';
    const v = values[k];
    if (typeof v === 'number') {
      if (v === Math.trunc(v) && v > -1e9 && v < 1e9) out += String(v);
      else if (Number.isFinite(v)) out += String(Number(v.toPrecision(9)));
    } else if (typeof v === 'string') out += NEEDS_QUOTES.test(v) ? `"${v.replace(/"/g, '""')}"` : v;
    else if (typeof v === 'boolean') out += v ? '1' : '0';
  }
  return out + '\n';
}
