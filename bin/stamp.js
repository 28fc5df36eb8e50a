// What a build of src/ was made from: the number of source files and the newest modification time among them.
// Listing ~100 files takes about a millisecond, cheap enough to check on every start.
import { readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';

/** @returns {{ files: number, newest_ms: number }} */
export function sourceStamp(dir) {
  let files = 0, newest = 0;
  const walk = (d) => {
    for (const e of readdirSync(d, { withFileTypes: true })) {
      const p = join(d, e.name);
      if (e.isDirectory()) walk(p);
      else if (/\.(ts|mts|mjs)$/.test(e.name)) {
        files++;
        newest = Math.max(newest, statSync(p).mtimeMs);
      }
    }
  };
  walk(dir);
  return { files, newest_ms: newest };
}
