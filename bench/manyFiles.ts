/**
 * Many files per instrument (`npm run bench`, section 5c; skip with --skip-many): the benchmark campaign's samples
 * cut into PARTS files per original file (made once under many-files/, each with the header; rows cut anywhere, as
 * a logger rotating its files by size would), read as one campaign with --cores 1. Memory and open files must not
 * grow with the number of files (pipeline/ingest.ts KEEP_PRIMED); the wall time is set beside the 6-file campaign's.
 * Alone: `node bin/run-ts.js bench/manyFiles.ts [--rows N] [--runs N]`.
 */
import { closeSync, existsSync, mkdirSync, openSync, readFileSync, rmSync, writeFileSync, writeSync } from 'node:fs';
import { basename, join } from 'node:path';
import { parse, stringify } from 'yaml';
import type { BenchData } from './generate.ts';

/** Files cut from each of the benchmark's files. */
export const PARTS = 20;

/** Cuts `src` into `parts` files of about equal size at line ends, each starting with the header line. */
function cut(src: string, dst: (k: number) => string, parts: number): void {
  const text = readFileSync(src);
  const headEnd = text.indexOf(10) + 1;
  const head = text.subarray(0, headEnd);
  const body = text.length - headEnd;
  let from = headEnd;
  for (let k = 0; k < parts; k++) {
    let to = k + 1 === parts ? text.length : headEnd + Math.floor(((k + 1) * body) / parts);
    if (k + 1 < parts) to = text.indexOf(10, to - 1) + 1;
    const fd = openSync(dst(k), 'w');
    try {
      writeSync(fd, head);
      writeSync(fd, text.subarray(from, to));
    } finally {
      closeSync(fd);
    }
    from = to;
  }
}

export interface ManyFiles {
  campaign: string;
  files: number;
}

/** The many-file campaign (made once beside the benchmark's files). */
export function manyFilesCampaign(d: BenchData, log: (s: string) => void): ManyFiles {
  const doc = parse(readFileSync(d.campaign, 'utf8')) as { name: string; instruments: { id: string; files: string[] }[]; output: Record<string, unknown> };
  const dir = join(d.dir, 'many-files');
  const stamp = join(dir, `done-${PARTS}`);
  if (!existsSync(stamp)) {
    rmSync(dir, { recursive: true, force: true });
    mkdirSync(dir, { recursive: true });
    log(`  cutting the benchmark's ${d.files.length} files into ${PARTS} each (once)`);
    for (const ins of doc.instruments) for (const f of ins.files) cut(join(d.dir, f), (k) => join(dir, basename(f).replace(/\.csv$/, `-${String(k).padStart(3, '0')}.csv`)), PARTS);
    writeFileSync(stamp, '');
  }
  let files = 0;
  for (const ins of doc.instruments) {
    ins.files = ins.files.flatMap((f) => Array.from({ length: PARTS }, (_, k) => join('many-files', basename(f).replace(/\.csv$/, `-${String(k).padStart(3, '0')}.csv`))));
    files += ins.files.length;
  }
  const campaign = join(d.dir, 'campaign-many-files.yaml');
  writeFileSync(campaign, stringify({ ...doc, name: `${doc.name}-many-files` }));
  return { campaign, files };
}

// Alone: generate if needed, then time the many-file campaign and the original alternately.
if (process.argv[1] && import.meta.url.endsWith(process.argv[1].split('/').pop()!)) {
  const { generateBench, rowsFromArgs } = await import('./generate.ts');
  const { spawnSync } = await import('node:child_process');
  const d = await generateBench(rowsFromArgs(process.argv), undefined, (s) => console.log(s));
  const m = manyFilesCampaign(d, (s) => console.log(s));
  const runs = Number(process.argv[process.argv.indexOf('--runs') + 1]) || 3;
  const root = new URL('..', import.meta.url).pathname;
  for (let k = 0; k < runs; k++) {
    for (const [name, c] of [['6 files', d.campaign], [`${m.files} files`, m.campaign]] as const) {
      const t = performance.now();
      const r = spawnSync('/usr/bin/time', ['-f', '%M', process.execPath, join(root, 'bin', 'wakeplane.js'), 'run', c, '--quiet', '--no-images', '--cores', '1'], { encoding: 'utf8' });
      console.log(`${name}: ${((performance.now() - t) / 1000).toFixed(3)} s, peak ${(Number(r.stderr.trim().split('\n').pop()) / 1024).toFixed(0)} MB, exit ${r.status}`);
    }
  }
}
