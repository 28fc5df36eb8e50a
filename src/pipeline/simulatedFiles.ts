/**
 * `wakeplane simulate` writes the data, series and terrain files a campaign names, and its truth folder: it must not
 * write over files it did not make (a user who adds a `simulation` section to a campaign of real measurements). The
 * simulator records what it wrote, with the SHA-256 of each file, in `<campaign folder>/truth/SIM_RECORD`; a later
 * simulation replaces only files listed there and unchanged since. Anything else in the way stops the command before
 * any file is written, with one line naming it.
 */
import { createHash } from 'node:crypto';
import { closeSync, existsSync, lstatSync, openSync, readdirSync, readFileSync, readSync } from 'node:fs';
import { join, relative } from 'node:path';
import type { Campaign } from '../campaign/types.ts';
import { OutputError } from '../errors.ts';
import { writeFileAtomic } from '../io/atomic.ts';
import { campaignInputs } from './outputFolder.ts';

export const SIM_RECORD = '.wakeplane-simulated.json';

interface SimRecord {
  tool: 'wakeplane';
  /** Absolute path -> SHA-256 of the content the simulator wrote. */
  files: Record<string, string>;
}

const truthDirOf = (c: Campaign) => join(c.baseDir, 'truth');
const recordPath = (c: Campaign) => join(truthDirOf(c), SIM_RECORD);
/** SHA-256 of a file read in blocks (simulated data files run to hundreds of MB: never held whole). */
function sha256(path: string): string {
  const h = createHash('sha256'), buf = Buffer.allocUnsafe(1 << 20), fd = openSync(path, 'r');
  try {
    for (let n; (n = readSync(fd, buf, 0, buf.length, null)) > 0; ) h.update(buf.subarray(0, n));
  } finally {
    closeSync(fd);
  }
  return h.digest('hex');
}

/** The files a simulation of `c` writes or replaces: the files the campaign reads (not itself) and its truth folder's. */
function targets(c: Campaign): string[] {
  const files = campaignInputs(c).filter((f) => f !== c.sourceFile);
  const truth = truthDirOf(c);
  if (existsSync(truth) && lstatSync(truth).isDirectory()) {
    for (const n of readdirSync(truth)) if (n !== SIM_RECORD) files.push(join(truth, n));
  }
  return files;
}

function readRecord(c: Campaign): SimRecord['files'] {
  try {
    const r = JSON.parse(readFileSync(recordPath(c), 'utf8')) as SimRecord;
    return r && r.tool === 'wakeplane' && r.files && typeof r.files === 'object' ? r.files : {};
  } catch {
    return {};
  }
}

/** Throws OutputError naming the first file in the simulator's way that it did not write (or that changed since). */
export function checkSimulationTargets(c: Campaign): void {
  const mine = readRecord(c);
  const refused: [string, string][] = [];
  for (const f of targets(c)) {
    let st;
    try {
      st = lstatSync(f);
    } catch {
      continue; // not there: written fresh
    }
    const why = !st.isFile() ? 'exists and is not a plain file'
      : mine[f] === undefined ? 'exists and was not written by wakeplane simulate'
      : mine[f] !== sha256(f) ? 'was written by wakeplane simulate but has changed since'
      : '';
    if (why) refused.push([f, why]);
  }
  if (!refused.length) return;
  const [f, why] = refused[0];
  const more = refused.length > 1 ? ` (and ${refused.length - 1} more file${refused.length > 2 ? 's' : ''} in its way)` : '';
  throw new OutputError(relative(process.cwd(), f) || f, `${why}${more}; left alone, nothing simulated. Move it away or name other files in the campaign`);
}

/** Records the files a simulation of `c` wrote (after it finished), so a later simulation may replace them. */
export function recordSimulation(c: Campaign): void {
  const files: SimRecord['files'] = {};
  for (const f of targets(c)) if (existsSync(f) && lstatSync(f).isFile()) files[f] = sha256(f);
  writeFileAtomic(recordPath(c), JSON.stringify({ tool: 'wakeplane', files } satisfies SimRecord, null, 2) + '\n');
}
