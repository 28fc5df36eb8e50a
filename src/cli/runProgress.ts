/**
 * Terminal progress for a run: the current stage and, while reading, the file and rows read. Silent when the
 * stream is not a terminal or when quiet.
 */
import { basename } from 'node:path';
import type { RunProgress } from '../pipeline/run.ts';

export function createRunProgress(stream: NodeJS.WriteStream, opts: { quiet?: boolean } = {}): RunProgress {
  const live = !opts.quiet && stream.isTTY === true;
  let stage = '';
  let last = 0;
  const show = (text: string) => {
    if (!live) return;
    stream.write(`\r\x1b[2K${text.slice(0, (stream.columns || 100) - 1)}`);
  };
  return {
    stage(name) {
      stage = name;
      show(`${name} ...`);
    },
    file(path, rows) {
      const now = Date.now();
      if (now - last < 200) return;
      last = now;
      show(`${stage}: ${basename(path)} ${rows.toLocaleString('en')} rows`);
    },
    done() {
      if (live) stream.write('\r\x1b[2K');
    },
  };
}
