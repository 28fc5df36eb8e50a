/**
 * Output folders: wakeplane renames, replaces or deletes only folders it marked as its own.
 *
 * Every folder wakeplane creates (a run's `<root>/<name>`, the planner's `<root>/<name>-plan`, and their staging
 * folders `<root>/.<folder>.partial-<pid>`) holds a marker file, MARKER, naming the tool, the kind of folder, the
 * campaign with the SHA-256 of its file, the state (partial or complete) and the writing process (host, boot, pid
 * and its start time). Rules:
 * - Names must be safe folder names: not empty, not "." or "..", no leading dot, no path separator.
 * - Whatever stands at the target and is not a folder marked by wakeplane for the same campaign and kind (a file, a
 *   symbolic link, a user's folder, another campaign's result) stops the command before any work, with one line
 *   naming it; it is never moved. A marker is a file anyone can copy, so it is not proof alone: the folder must also
 *   hold only what wakeplane wrote there (the files the marker lists from the commit, and those the manifest lists,
 *   which a render adds to); a user's file or folder inside stops the command too, naming it. So does an earlier
 *   result that holds a file the command reads (the campaign file, a data or series file kept inside it): replacing
 *   it would move the user's files away; and one another user owns in a folder with the sticky bit (not ours to move).
 * - The output root must be a folder or not exist yet; a file in its place (or in the place of a folder above it)
 *   stops the command before any work. (Results written before markers existed are recognised by their manifest.json
 *   naming wakeplane and the campaign.)
 * - An earlier result is kept as `<folder>.replaced-<UTC time to the millisecond>-<pid>` (a counter is added should
 *   that exist), so two runs finishing in the same second never collide.
 * - Staging folders of runs that stopped without cleaning up (killed, power loss) are reported. One is provably
 *   stale, and removed at once, when its marker names this host and either another boot, a process that no longer
 *   exists, or a process of that pid that started at another time (the pid was reused). Others (another host, a
 *   process that cannot be checked) are removed only with `clean`; one whose process is still running never is.
 *   One holding anything a run or the planner does not write at its top level (RUN_ENTRIES) is never removed.
 * - While a command runs, its staging folder is registered for removal on SIGINT/SIGTERM (io/cleanup.ts; the CLI
 *   installs the handlers).
 */
import { hostname } from 'node:os';
import { accessSync, constants, existsSync, lstatSync, mkdirSync, readdirSync, readFileSync, readlinkSync, realpathSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { basename, dirname, isAbsolute, join, relative, sep } from 'node:path';
import { OutputError } from '../errors.ts';
import { writeFileAtomic } from '../io/atomic.ts';
import { removeOnInterrupt } from '../io/cleanup.ts';

export const MARKER = '.wakeplane-folder.json';

export type FolderKind = 'run' | 'plan';

export interface FolderMarker {
  tool: 'wakeplane';
  kind: FolderKind;
  campaign: string;
  campaignSha256: string;
  state: 'partial' | 'complete';
  host: string;
  bootId: string;
  pid: number;
  /** Start time of the writing process in clock ticks since boot (Linux /proc/<pid>/stat field 22); '' elsewhere. */
  processStart: string;
  startedAt: string;
  finishedAt?: string;
  /** Every file in the folder when it was completed, relative, '/'-separated (written at commit). */
  files?: string[];
  /** Set while `render` redraws the folder (its process), cleared when the render has listed its outputs. */
  rendering?: { at: string; host: string; pid: number; processStart: string } | string;
}

/**
 * Names a run or the planner writes at the top of its folder (pipeline/stages.ts, run.ts, plan/): a staging folder
 * holding anything else is not removed as a stopped run's.
 */
const RUN_ENTRIES = new Set([
  MARKER, 'manifest.json', 'dictionary.json', 'dictionary.md', 'report.html', 'rejected_rows.csv',
  'fields', 'wake', 'images', 'plan', 'power', 'nacelle', 'profiles', 'tracks', '.shards',
]);

/** Files `render` draws (figures and the report). */
const DRAWN = /^(report\.html|(images|plan)\/[^/]+\.(svg|png))$/;

/** A temporary name of an atomic write (io/atomic.ts, io/partialFile.ts) left by a killed command. */
const TEMPORARY = /\.\d+\.tmp$|\.writing-\d+$/;

/** Every entry below `dir` (not following links): relative '/'-separated path and whether it is a folder. */
function entriesOf(dir: string): { path: string; folder: boolean }[] {
  const out: { path: string; folder: boolean }[] = [];
  const walk = (d: string, prefix: string) => {
    for (const e of readdirSync(d, { withFileTypes: true })) {
      const path = prefix + e.name;
      out.push({ path, folder: e.isDirectory() });
      if (e.isDirectory()) walk(join(d, e.name), path + '/');
    }
  };
  walk(dir, '');
  return out;
}

/**
 * The first entry of a complete folder that wakeplane did not write (files the marker lists, files the manifest
 * lists, the folders holding them, the temporary name of a killed write of one of those), or undefined when there is
 * none.
 */
function foreignEntry(dir: string, m: FolderMarker | undefined): string | undefined {
  const known = new Set<string>([MARKER, 'manifest.json', ...(m?.files ?? [])]);
  const manifest = readText(join(dir, 'manifest.json'));
  if (manifest) {
    try {
      for (const o of (JSON.parse(manifest) as { outputs?: { path?: unknown }[] }).outputs ?? []) if (typeof o?.path === 'string') known.add(o.path);
    } catch {
      // not a manifest: only the marker's list counts
    }
  }
  // A plan folder marked before markers listed their files: the planner writes only below plan/.
  const legacyPlan = m?.kind === 'plan' && !m.files;
  // A render that stopped before rewriting the manifest left figures and a report it had not listed yet.
  const drawn = (p: string) => m?.rendering !== undefined && DRAWN.test(p);
  // a file wakeplane wrote; a temporary name (a killed write) counts when the file it was written for does
  const ours = (p: string) => known.has(p) || drawn(p);
  const folders = new Set<string>();
  for (const f of known) for (let k = f.indexOf('/'); k > 0; k = f.indexOf('/', k + 1)) folders.add(f.slice(0, k));
  let entries;
  try {
    entries = entriesOf(dir);
  } catch {
    return '.';
  }
  const allowed = (e: { path: string; folder: boolean }) => {
    if (legacyPlan && (e.path === 'plan' || e.path.startsWith('plan/'))) return true;
    if (e.folder) return folders.has(e.path) || drawn(`${e.path}/x.svg`); // a folder render draws into
    return ours(e.path) || (TEMPORARY.test(e.path) && ours(e.path.replace(TEMPORARY, '')));
  };
  return entries.find((e) => !allowed(e))?.path;
}

export interface FolderRequest {
  /** Output root (absolute). */
  root: string;
  /** Folder name under the root (the campaign name, or `<name>-plan`). */
  folder: string;
  kind: FolderKind;
  campaign: string;
  campaignSha256: string;
  /** Also remove stale staging folders whose state cannot be proven (other host, unknown process). */
  clean?: boolean;
  /** Absolute paths of the files the command reads (campaignInputs): an earlier result holding one is not replaced. */
  inputs?: readonly string[];
}

export interface PartialFolder {
  path: string;
  status: 'stale' | 'running' | 'unknown' | 'unmarked';
  why: string;
}

const rel = (p: string) => relative(process.cwd(), p) || p;

/** Throws OutputError unless `name` is a safe folder name. */
export function checkFolderName(name: string, root = '.'): void {
  const why =
    name === '' ? 'is empty'
    : name === '.' || name === '..' ? 'is "." or ".."'
    : name.startsWith('.') ? 'starts with "." (hidden; reserved for staging folders)'
    : /[/\\\0]/.test(name) || name.includes(sep) ? 'contains a path separator'
    : name.length > 200 ? 'is longer than 200 characters'
    : '';
  if (why) throw new OutputError(join(root, name), `not a safe output folder name: the name ${JSON.stringify(name)} ${why}`);
}

function readText(path: string): string | undefined {
  try {
    return readFileSync(path, 'utf8');
  } catch {
    return undefined;
  }
}

function bootId(): string {
  return readText('/proc/sys/kernel/random/boot_id')?.trim() ?? '';
}

/** Start time of process `pid` in clock ticks since boot, from /proc/<pid>/stat (field 22); '' when unknown. */
export function processStartOf(pid: number): string {
  const stat = readText(`/proc/${pid}/stat`);
  if (!stat) return '';
  const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' '); // fields from 3 on (the name may hold spaces)
  return fields[22 - 3] ?? '';
}

function pidAlive(pid: number): boolean | undefined {
  try {
    process.kill(pid, 0);
    return true;
  } catch (e) {
    const code = (e as NodeJS.ErrnoException).code;
    return code === 'ESRCH' ? false : code === 'EPERM' ? true : undefined;
  }
}

/**
 * Marks a complete folder as being redrawn by `render` (or, with `false`, as redrawn: the manifest lists the new
 * figures), so that figures of a render stopped half way are known as wakeplane's.
 */
export function markRendering(dir: string, on: boolean): void {
  const m = readMarker(dir);
  if (!m) return; // a result written before markers: its manifest alone lists its files
  const { rendering: _, ...rest } = m;
  if (!on && m.rendering !== undefined) {
    // Figures an earlier, stopped render drew (allowed while the mark stood) that this render neither drew nor removed,
    // and the temporary files of one killed outright, are wakeplane's: the marker lists them from now on.
    const drawn = entriesOf(dir).filter((e) => !e.folder && DRAWN.test(e.path.replace(TEMPORARY, ''))).map((e) => e.path);
    rest.files = [...new Set([...(m.files ?? []), ...drawn])].sort();
  }
  // atomic: a render stopped mid-write must not leave a marker that no longer reads (the folder would be refused)
  const rendering = { at: new Date().toISOString(), host: hostname(), pid: process.pid, processStart: processStartOf(process.pid) };
  writeFileAtomic(join(dir, MARKER), JSON.stringify(on ? { ...rest, rendering } : rest, null, 2) + '\n');
}

export function readMarker(dir: string): FolderMarker | undefined {
  const text = readText(join(dir, MARKER));
  if (!text) return undefined;
  try {
    const m = JSON.parse(text) as FolderMarker;
    return m && m.tool === 'wakeplane' && typeof m.campaign === 'string' ? m : undefined;
  } catch {
    return undefined;
  }
}

/** A result written before markers existed: its manifest.json names wakeplane and the campaign. */
function legacyResultOf(dir: string): string | undefined {
  const text = readText(join(dir, 'manifest.json'));
  if (!text) return undefined;
  try {
    const m = JSON.parse(text) as { tool?: { name?: string }; campaign?: { name?: string } };
    return m.tool?.name === 'wakeplane' && typeof m.campaign?.name === 'string' ? m.campaign.name : undefined;
  } catch {
    return undefined;
  }
}

/**
 * Absolute paths of the files a campaign reads: the campaign file, every data file (`files`) and every other `file`
 * key (series, terrain), found by walking the resolved campaign, so a new series kind is covered without a change here.
 */
export function campaignInputs(c: object): string[] {
  const out: string[] = [];
  const walk = (v: unknown, key: string) => {
    if (typeof v === 'string') {
      if ((key === 'file' || key === 'files' || key === 'sourceFile') && isAbsolute(v)) out.push(v);
    } else if (Array.isArray(v)) {
      for (const x of v) walk(x, key);
    } else if (v && typeof v === 'object') {
      for (const [k, x] of Object.entries(v)) walk(x, k);
    }
  };
  const file = (c as { sourceFile?: unknown }).sourceFile;
  if (typeof file === 'string') walk(file, 'sourceFile'); // the campaign file first: named first when several are held
  walk(c, '');
  return [...new Set(out)];
}

function realOr(p: string): string {
  try {
    return realpathSync(p);
  } catch {
    return p;
  }
}

/** The first of `inputs` that lies inside the folder `dir` (symbolic links resolved), or undefined. */
function inputInside(dir: string, inputs: readonly string[]): string | undefined {
  const real = realOr(dir);
  return inputs.find((f) => realOr(f).startsWith(real + sep));
}

/**
 * Why wakeplane may not replace what stands at `path`, or '' when it may (nothing there, or a complete folder it
 * marked for the same campaign and kind that holds none of `inputs`, the files the command reads).
 */
export function replaceRefusal(path: string, kind: FolderKind, campaign: string, inputs: readonly string[] = []): string {
  const own = ownRefusal(path, kind, campaign);
  if (typeof own === 'string') return own;
  // A file the command reads is named first (the more useful advice), then anything else wakeplane did not write.
  const held = inputs.length ? inputInside(path, inputs) : undefined;
  if (held) return `holds ${rel(held)}, which this command reads; left alone. Move your files out of the result folder or choose another output.dir (--out)`;
  const foreign = foreignEntry(path, own.marker);
  return foreign ? `holds ${foreign}, which wakeplane did not write; left alone. Move it out of the folder or choose another output.dir (--out)` : '';
}

/** Why what stands at `path` is not wakeplane's folder of this kind and campaign ('' when nothing is there), or its marker. */
function ownRefusal(path: string, kind: FolderKind, campaign: string): string | { marker: FolderMarker | undefined } {
  let st;
  try {
    st = lstatSync(path);
  } catch {
    return '';
  }
  if (st.isSymbolicLink()) return 'exists and is a symbolic link, not a folder wakeplane made; left alone. Move it away or choose another output.dir (--out)';
  if (!st.isDirectory()) return 'exists and is a file, not a folder wakeplane made; left alone. Move it away or choose another output.dir (--out)';
  const m = readMarker(path);
  if (!m) {
    const legacy = legacyResultOf(path);
    if (legacy === campaign && kind === 'run') return { marker: undefined };
    return `exists and was not made by wakeplane (no ${MARKER}); left alone. Move it away or choose another output.dir (--out)`;
  }
  if (m.kind !== kind || m.campaign !== campaign) {
    return `holds wakeplane's ${m.kind === 'plan' ? 'plan' : 'results'} of campaign "${m.campaign}", not the ${kind === 'plan' ? 'plan' : 'results'} of "${campaign}"; left alone. Choose another name or output.dir (--out)`;
  }
  if (m.state !== 'complete') return 'is marked as an unfinished folder; left alone';
  const r = m.rendering;
  if (r && typeof r === 'object' && r.host === hostname() && r.pid !== process.pid && r.processStart && processStartOf(r.pid) === r.processStart) {
    return `is being redrawn by \`wakeplane render\` (pid ${r.pid}); left alone. Wait for it to finish and run again`;
  }
  return { marker: m };
}

/**
 * Throws OutputError when the output root cannot hold folders: it, or the nearest existing folder above it, is a
 * file (a path through a file fails every write with ENOTDIR or EEXIST), or that folder is not writable by this
 * process (so `check` fails exactly when the run's first mkdir would).
 */
export function checkRoot(root: string): void {
  for (let p = root; ; p = dirname(p)) {
    let st;
    try {
      st = statSync(p);
    } catch {
      let link = '';
      try {
        if (lstatSync(p).isSymbolicLink()) link = readlinkSync(p);
      } catch {
        // nothing there
      }
      if (link) throw new OutputError(rel(p), `the output folder (output.dir) is a symbolic link to ${link}, which does not exist; nothing written. Create that folder or choose another output.dir (--out)`);
      if (dirname(p) === p) return;
      continue; // not there yet: created by the command
    }
    if (!st.isDirectory()) throw new OutputError(rel(p), 'the output folder (output.dir) is a file, not a folder; nothing written. Choose another output.dir (--out)');
    try {
      accessSync(p, constants.W_OK | constants.X_OK);
    } catch {
      throw new OutputError(rel(p), 'the output folder (output.dir) cannot be written here (no write permission); nothing written. Choose another output.dir (--out)');
    }
    return;
  }
}

/**
 * Why this process may not rename `target` in `root` ('' when it may): in a folder with the sticky bit (as /tmp or a
 * group's shared space) only the owner of an entry, or of the folder, may rename it, so an earlier result another
 * user wrote there cannot be kept aside. `uid`: this process's user (tests pass another); root may rename anything.
 */
export function renameRefusal(root: string, target: string, uid = process.getuid?.()): string {
  if (uid === undefined || uid === 0) return '';
  let r, t;
  try {
    r = statSync(root);
    t = lstatSync(target);
  } catch {
    return '';
  }
  if (!(r.mode & 0o1000) || t.uid === uid || r.uid === uid) return '';
  return `belongs to another user (uid ${t.uid}) in a folder where only a folder's owner may rename it (sticky bit), so it cannot be kept aside; nothing written. Ask its owner to move it, or choose another output.dir (--out)`;
}

/** Throws OutputError when the target of a command exists and is not wakeplane's to replace (before any work). */
export function checkTarget(req: FolderRequest): void {
  checkFolderName(req.folder, req.root);
  checkRoot(req.root);
  const target = join(req.root, req.folder);
  const why = replaceRefusal(target, req.kind, req.campaign, req.inputs) || renameRefusal(req.root, target);
  if (why) throw new OutputError(rel(target), why);
}

/** The staging folders of `folder` under `root` and whether each is provably stale. */
export function findPartials(root: string, folder: string): PartialFolder[] {
  let names: string[];
  try {
    names = readdirSync(root);
  } catch {
    return [];
  }
  const prefix = `.${folder}.partial-`;
  const out: PartialFolder[] = [];
  const host = hostname(), boot = bootId();
  for (const n of names) {
    if (!n.startsWith(prefix) || !/^\d+$/.test(n.slice(prefix.length))) continue;
    const path = join(root, n);
    let st;
    try {
      st = lstatSync(path);
    } catch {
      continue;
    }
    const m = st.isDirectory() ? readMarker(path) : undefined;
    if (!m || m.state !== 'partial') {
      const why = m?.state === 'complete' ? 'a finished result kept there because its target was in the way; left alone: move it into place yourself' : 'not marked by wakeplane; left alone';
      out.push({ path, status: 'unmarked', why });
      continue;
    }
    let foreign: string | undefined;
    try {
      foreign = readdirSync(path).find((n) => !RUN_ENTRIES.has(n) && !TEMPORARY.test(n));
    } catch (e) {
      foreign = `what cannot be listed (${(e as NodeJS.ErrnoException).code ?? 'error'})`;
    }
    if (foreign) {
      out.push({ path, status: 'unmarked', why: `holds ${foreign}, which a run does not write; left alone` });
      continue;
    }
    if (m.pid === process.pid && m.processStart === processStartOf(process.pid) && m.host === host) {
      out.push({ path, status: 'running', why: 'this process' });
      continue;
    }
    if (m.host !== host) {
      out.push({ path, status: 'unknown', why: `written on host ${m.host}` });
      continue;
    }
    if (m.bootId && boot && m.bootId !== boot) {
      out.push({ path, status: 'stale', why: `its run (pid ${m.pid}) stopped before the last restart of this machine` });
      continue;
    }
    const alive = pidAlive(m.pid);
    if (alive === false) {
      out.push({ path, status: 'stale', why: `its run (pid ${m.pid}) no longer exists` });
    } else if (alive && m.processStart && processStartOf(m.pid) && processStartOf(m.pid) !== m.processStart) {
      out.push({ path, status: 'stale', why: `its run (pid ${m.pid}) no longer exists (the pid now belongs to another process)` });
    } else if (alive && m.processStart && processStartOf(m.pid) === m.processStart) {
      out.push({ path, status: 'running', why: `its run (pid ${m.pid}) is still running` });
    } else {
      out.push({ path, status: 'unknown', why: `cannot tell whether its run (pid ${m.pid}) still runs` });
    }
  }
  return out;
}

/**
 * Removes the provably stale staging folders of `folder` (and, with `clean`, those of unknown state) and returns one
 * notice per staging folder found.
 */
export function sweepPartials(root: string, folder: string, clean: boolean): string[] {
  const notes: string[] = [];
  for (const p of findPartials(root, folder)) {
    if (p.status === 'running' && p.why === 'this process') continue;
    if ((p.status === 'stale' || (p.status === 'unknown' && clean)) && renameRefusal(root, p.path)) {
      // another user's, in a sticky folder: its files could be removed, the folder itself not
      notes.push(`unfinished folder ${rel(p.path)} left in place (${p.why}; another user's, in a folder where only its owner may remove it)`);
    } else if (p.status === 'stale' || (p.status === 'unknown' && clean)) {
      try {
        rmSync(p.path, { recursive: true, force: true });
        notes.push(`removed the unfinished folder ${rel(p.path)} (${p.why})`);
      } catch (e) {
        notes.push(`unfinished folder ${rel(p.path)} could not be removed (${(e as NodeJS.ErrnoException).code ?? 'error'}; ${p.why}); left in place`);
      }
    } else if (p.status === 'unknown') {
      notes.push(`unfinished folder ${rel(p.path)} left in place (${p.why}); remove it with --clean`);
    } else {
      notes.push(`unfinished folder ${rel(p.path)} left in place (${p.why})`);
    }
  }
  return notes;
}

function stamp(d: Date): string {
  return d.toISOString().replace(/[-:]/g, ''); // 20260614T101500.123Z
}

/** A staging folder being written; commit() makes it the result, abort() removes it. */
export interface Staging {
  /** The staging folder to write into. */
  dir: string;
  /** Where the result will be. */
  finalDir: string;
  /** Notices so far (stale folders removed or reported). */
  notices: string[];
  /** Marks the folder complete, keeps an earlier result as `.replaced-...`, renames into place; returns notices. */
  commit(): string[];
  /** Removes the staging folder. */
  abort(): void;
}

/** Checks the target, sweeps stale staging folders, and creates a marked staging folder. */
export function openStaging(req: FolderRequest): Staging {
  checkTarget(req);
  const finalDir = join(req.root, req.folder);
  const made = (path: string, make: () => void) => {
    try {
      make();
    } catch (e) {
      // a read-only or full file system, a folder without write permission: one line naming the folder
      throw new OutputError(rel(path), `cannot create the output folder (${(e as NodeJS.ErrnoException).code ?? (e as Error).message}); nothing written. Choose another output.dir (--out)`);
    }
  };
  made(req.root, () => mkdirSync(req.root, { recursive: true }));
  const notices = sweepPartials(req.root, req.folder, req.clean ?? false);
  const dir = join(req.root, `.${req.folder}.partial-${process.pid}`);
  if (existsSync(dir)) {
    throw new OutputError(rel(dir), 'a staging folder of this process id exists and is not provably stale; left alone. Remove it (or run with --clean) and try again');
  }
  made(dir, () => mkdirSync(dir));
  const marker: FolderMarker = {
    tool: 'wakeplane', kind: req.kind, campaign: req.campaign, campaignSha256: req.campaignSha256, state: 'partial',
    host: hostname(), bootId: bootId(), pid: process.pid, processStart: processStartOf(process.pid), startedAt: new Date().toISOString(),
  };
  writeFileSync(join(dir, MARKER), JSON.stringify(marker, null, 2) + '\n');
  const unregister = removeOnInterrupt(dir);
  let open = true;
  return {
    dir,
    finalDir,
    notices,
    commit() {
      const out: string[] = [];
      const files = entriesOf(dir).filter((e) => !e.folder && e.path !== MARKER).map((e) => e.path).sort();
      writeFileSync(join(dir, MARKER), JSON.stringify({ ...marker, state: 'complete', finishedAt: new Date().toISOString(), files }, null, 2) + '\n');
      for (let attempt = 0; ; attempt++) {
        const why = replaceRefusal(finalDir, req.kind, req.campaign, req.inputs);
        if (why) {
          // The new result is complete: kept where it is (marked complete, so never swept as a stopped run's) and named.
          open = false;
          unregister();
          throw new OutputError(rel(finalDir), `${why} (it appeared while this command ran); the new result stays in ${rel(dir)}`);
        }
        if (existsSync(finalDir)) {
          let kept = `${finalDir}.replaced-${stamp(new Date())}-${process.pid}`;
          for (let k = 2; existsSync(kept); k++) kept = `${finalDir}.replaced-${stamp(new Date())}-${process.pid}-${k}`;
          try {
            renameSync(finalDir, kept);
          } catch (e) {
            // The earlier result cannot be moved aside (permissions changed while the command ran): the new result
            // stays complete in the staging folder, which is named, not removed.
            open = false;
            unregister();
            throw new OutputError(rel(finalDir), `cannot keep the earlier result aside (${(e as NodeJS.ErrnoException).code ?? 'error'}); the new result stays in ${rel(dir)}`);
          }
          out.push(`an earlier result was kept as ${rel(kept)}`);
        }
        try {
          renameSync(dir, finalDir);
          break;
        } catch (e) {
          const code = (e as NodeJS.ErrnoException).code;
          // another command put a folder there between the two renames: go round again (it is checked first)
          if ((code === 'ENOTEMPTY' || code === 'EEXIST') && attempt < 3) continue;
          open = false;
          unregister();
          throw new OutputError(rel(finalDir), `cannot move the finished result into place (${code ?? 'error'}); it stays in ${rel(dir)}`);
        }
      }
      open = false;
      unregister();
      return out;
    },
    abort() {
      if (!open) return;
      open = false;
      unregister();
      if (basename(dir).startsWith(`.${req.folder}.partial-`)) rmSync(dir, { recursive: true, force: true });
    },
  };
}
