/**
 * Reading and validating a campaign file. Validation happens here, once: the result is fully defaulted and resolved
 * (absolute paths, site-frame positions, planes in metres). Errors name the file, the line and column, the key path,
 * the rule and the value received; every schema problem is reported at once (problems.ts), then the checks that
 * need the resolved campaign (unique ids, positions, planes) and the geometry's plausibility (plausibility.ts).
 *
 * The file must be UTF-8 (a bad byte is reported with its position, never replaced); YAML aliases may not expand
 * beyond MAX_ALIASES uses (a few kilobytes of "alias bomb" would otherwise expand into gigabytes).
 *
 * Paths: data files, series files and output.dir are resolved against the campaign file's folder (a campaign is
 * self-contained and runs the same from any working directory); a campaign given in memory resolves them against
 * the working directory.
 */
import { readFileSync } from 'node:fs';
import { homedir } from 'node:os';
import { dirname, isAbsolute, resolve } from 'node:path';
import { parseDocument, LineCounter } from 'yaml';
import { z } from 'zod';
import { ConfigError, ConfigErrors } from '../errors.ts';
import { wgs84ToEnu } from '../geometry/geodetic.ts';
import { fileProblem } from '../io/fileKind.ts';
import { firstInvalidUtf8, linePosOfByte } from '../io/utf8.ts';
import { campaignSchema, type CampaignInput } from './schema.ts';
import { plausibilityErrors } from './plausibility.ts';
import { keyPathOf, problemsFromIssues, yamlLocator, type KeyPath, type Locator } from './problems.ts';
import type { Campaign, Instrument, PlaneSpec, TerrainRef, Turbine, Vec3 } from './types.ts';
import { parseTime } from '../io/time.ts';
import { conditionVariableProblem } from './conditionVariables.ts';

/** Most alias uses a campaign file may make (the yaml library's maxAliasCount). */
export const MAX_ALIASES = 100;
/** Largest campaign file read, bytes (a campaign is a page of text; anything larger is not one). */
const MAX_CAMPAIGN_BYTES = 16 << 20;

export function loadCampaignFile(path: string): Campaign {
  const abs = resolve(path);
  const bad = fileProblem(abs);
  if (bad) throw new ConfigError(abs, '', `the campaign file ${bad.reason}`);
  let bytes: Buffer;
  try {
    bytes = readFileSync(abs);
  } catch (e) {
    throw new ConfigError(abs, '', `cannot read the campaign file (${(e as NodeJS.ErrnoException).code ?? 'error'})`);
  }
  if (bytes.length > MAX_CAMPAIGN_BYTES) throw new ConfigError(abs, '', `${bytes.length} bytes: too large for a campaign file (at most ${MAX_CAMPAIGN_BYTES})`);
  const at = firstInvalidUtf8(bytes);
  if (at >= 0) {
    const pos = linePosOfByte(bytes, at);
    throw new ConfigError(abs, '', `not UTF-8 text: byte ${at} (0x${bytes[at].toString(16).padStart(2, '0')}) is not valid UTF-8; save the file as UTF-8`, undefined, pos);
  }
  return parseCampaignText(bytes.toString('utf8'), abs);
}

/** Parses YAML or JSON text (JSON is YAML) and resolves it; `file` names it in errors and anchors relative paths. */
export function parseCampaignText(text: string, file: string): Campaign {
  const lc = new LineCounter();
  const doc = parseDocument(text.replace(/^\uFEFF/, ''), { lineCounter: lc, prettyErrors: true, uniqueKeys: true });
  if (doc.errors.length > 0) {
    const problems = doc.errors.map((err) => {
      const p = err.linePos?.[0];
      const at = p ? { line: p.line, col: p.col } : undefined;
      // The parser names neither the key nor where it first stood: the key is read from the text at the error.
      const dup = err.code === 'DUPLICATE_KEY' ? /^("[^"\n]*"|'[^'\n]*'|[^:,{}[\]\n]+?)\s*:/.exec(text.replace(/^\uFEFF/, '').slice(err.pos[0]))?.[1] : undefined;
      if (dup) return new ConfigError(file, '', `duplicate key ${JSON.stringify(dup.replace(/^["']|["']$/g, '').slice(0, 60))}: a key may be given once in a mapping`, undefined, at);
      return new ConfigError(file, '', `not valid YAML/JSON: ${err.message.split('\n')[0].replace(/ at line \d+, column \d+:?$/, '')}`, undefined, at);
    });
    throw problems.length === 1 ? problems[0] : new ConfigErrors(file, problems);
  }
  let raw: unknown;
  try {
    raw = doc.toJS({ maxAliasCount: MAX_ALIASES });
  } catch (e) {
    if (e instanceof ReferenceError && /alias/i.test(e.message)) {
      throw new ConfigError(file, '', `YAML aliases (*name) expand too far (more than ${MAX_ALIASES} alias uses): refused, as such a file can expand into gigabytes`);
    }
    throw new ConfigError(file, '', `not valid YAML/JSON: ${(e as Error).message.split('\n')[0]}`);
  }
  return resolveCampaign(raw, file, yamlLocator(doc, lc));
}

/**
 * Validates a plain object (already parsed) and resolves it into a Campaign. Throws one ConfigError, or
 * ConfigErrors listing every problem; `locate` adds line and column to each (parseCampaignText passes one).
 */
export function resolveCampaign(raw: unknown, file: string, locate?: Locator): Campaign {
  const parsed = campaignSchema.safeParse(raw);
  if (!parsed.success) {
    throwAll(file, problemsFromIssues(file, raw, parsed.error.issues, campaignJsonSchema(), locate));
  }
  const c = parsed.data!;
  const problems: ConfigError[] = [];
  const bad = (path: KeyPath, rule: string, received?: unknown) =>
    problems.push(new ConfigError(file, keyPathOf(path), rule, received, locate?.(path)));
  const baseDir = file === '<memory>' ? process.cwd() : dirname(file);
  // "~" and "~/..." mean the home folder, as in a shell (not a folder named "~" beside the campaign file).
  const home = (p: string) => (/^~(?=$|[/\\])/.test(p) ? homedir() + p.slice(1) : p);
  const abs = (p: string) => (isAbsolute(home(p)) ? home(p) : resolve(baseDir, p));

  const turbines = resolveTurbines(c, abs, bad);
  // Instruments on a nacelle sit on the first turbine.
  const host = turbines[0];
  const ids = new Set<string>();
  const instruments: Instrument[] = c.instruments.map((ins, index) => {
    const where = ['instruments', index];
    if (ids.has(ins.id)) bad([...where, 'id'], 'instrument ids must be unique', ins.id);
    ids.add(ins.id);
    let position: Vec3 = [NaN, NaN, NaN];
    const beamFrame = ins.beamFrame ?? (ins.role === 'nacelle' ? 'nacelle' : 'site');
    const mount: Vec3 = ins.mount_m ? [...ins.mount_m] : [0, 0, host.hubHeight_m];
    if (beamFrame === 'nacelle') {
      if (!host.series) {
        bad([...where, 'beamFrame'], 'beam angles relative to the nacelle need the nacelle direction at each sample: give turbine.series (time, yaw_deg), or beamFrame: site if the angles are already site azimuths');
      }
      if (ins.position_m || ins.position_wgs84) bad(where, 'an instrument on the nacelle (beamFrame nacelle) is placed by mount_m [forward, left, up] from the tower base, not by position_m');
      // Nominal site position: the mount with the nacelle facing north (the ingest turns it with the nacelle).
      position = [host.position[0] - mount[1], host.position[1] + mount[0], host.position[2] + mount[2]];
    } else if (ins.position_m && ins.position_wgs84) {
      bad(where, 'give either position_m or position_wgs84, not both');
    } else if (ins.position_m) {
      position = [...ins.position_m];
    } else if (ins.position_wgs84) {
      if (!c.site.origin_wgs84) bad([...where, 'position_wgs84'], 'needs site.origin_wgs84 to place it in the site frame');
      else position = wgs84ToEnu(ins.position_wgs84, c.site.origin_wgs84);
    } else {
      bad(where, 'needs position_m (east, north, up metres) or position_wgs84');
    }
    return {
      id: ins.id,
      index,
      position,
      kind: ins.kind,
      pulsed: ins.pulsed,
      cw: ins.cw,
      calibration: ins.calibration,
      pointingUncertainty: ins.pointingUncertainty,
      files: ins.files.map(abs),
      columns: ins.columns,
      radialVelocitySign: ins.radialVelocitySign,
      ...(ins.cnrMin_db !== undefined ? { cnrMin_db: ins.cnrMin_db } : {}),
      scan: ins.scan,
      role: ins.role,
      beamFrame,
      mount,
      orientationSeries: ins.orientationSeries ? { file: abs(ins.orientationSeries.file), columns: ins.orientationSeries.columns } : undefined,
      profile: ins.profile,
      nacelle: ins.nacelle,
      track: ins.track,
    };
  });
  checkRoles(instruments, c.planes.length, bad);
  if (instruments.length > 255) bad(['instruments'], 'at most 255 instruments', instruments.length);

  const planeIds = new Set<string>();
  const planes: PlaneSpec[] = c.planes.map((p, index) => {
    const where = ['planes', index];
    if (planeIds.has(p.id)) bad([...where, 'id'], 'plane ids must be unique', p.id);
    planeIds.add(p.id);
    const frame = planeFrame(p.frame, p.heights, turbines, [...where, 'frame'], bad);
    // Sizes in rotor diameters and the default height refer to the plane's turbine (the first one for the site frame).
    const own = turbines[Math.max(0, frame.turbineIndex)];
    const D = own.rotorDiameter_m;
    const hubZ = p.heights === 'terrain' ? own.hubHeight_m : p.heights === 'site' ? own.position[2] + own.hubHeight_m : own.position[2] - frame.origin[2] + own.hubHeight_m;
    if (p.orientation === 'cross') {
      if ((p.x_m === undefined) === (p.x_D === undefined)) bad(where, 'a cross plane needs exactly one of x_m or x_D');
      if (!p.z) bad([...where, 'z'], 'a cross plane needs its vertical extent z: {min, max}');
      const x_m = p.x_m ?? (p.x_D ?? NaN) * D;
      if (x_m <= 0) bad([...where, p.x_m !== undefined ? 'x_m' : 'x_D'], 'the plane must lie downstream of the rotor (x > 0)', x_m);
      return {
        id: p.id, index, orientation: 'cross', x_m, z_m: NaN, y: p.y, second: p.z ?? { min: 0, max: 1 }, cell_m: p.cell_m, thickness_m: p.thickness_m, ...frame,
      };
    }
    if (!p.xRange) bad([...where, 'xRange'], 'a horizontal plane needs its downstream extent xRange: {min, max}');
    return {
      id: p.id, index, orientation: 'horizontal', x_m: NaN, z_m: p.z_m ?? hubZ, y: p.y, second: p.xRange ?? { min: 0, max: 1 },
      cell_m: p.cell_m, thickness_m: p.thickness_m, ...frame,
    };
  });
  for (const p of planes) {
    const ny = Math.round((p.y.max - p.y.min) / p.cell_m[0]);
    const nz = Math.round((p.second.max - p.second.min) / p.cell_m[1]);
    if (ny * nz > 1_000_000) bad(['planes', p.index, 'cell_m'], 'more than 1e6 cells in one plane; use larger cells', p.cell_m);
  }
  c.instruments.forEach((ins, k) => {
    if (typeof ins.cnrMin_db === 'number' && ins.cnrMin_db >= c.qc.cnr_db.max) bad(['instruments', k, 'cnrMin_db'], 'must be below qc.cnr_db.max', ins.cnrMin_db);
  });
  if (typeof c.qc.cnr_db.min === 'number' && c.qc.cnr_db.max <= c.qc.cnr_db.min) bad(['qc', 'cnr_db'], 'max must be greater than min', c.qc.cnr_db);

  if (c.qc.cnr_db.auto.withoutEvidence_db >= c.qc.cnr_db.max) bad(['qc', 'cnr_db', 'auto', 'withoutEvidence_db'], 'must be below qc.cnr_db.max', c.qc.cnr_db.auto.withoutEvidence_db);
  if (c.qc.cnr_db.auto.fallback_db >= c.qc.cnr_db.max) bad(['qc', 'cnr_db', 'auto', 'fallback_db'], 'must be below qc.cnr_db.max', c.qc.cnr_db.auto.fallback_db);

  const tSeries = segmentTurbine(c, turbines, bad)?.series;
  if (c.power) {
    for (const [k, id] of [['reference', c.power.reference], ...(c.power.turbines ?? []).map((t, i) => [i, t])] as [string | number, string | undefined][]) {
      const path = typeof k === 'number' ? ['power', 'turbines', k] : ['power', k];
      if (id !== undefined && !turbines.some((t) => t.id === id)) bad(path, `no turbine with this id (known: ${turbines.map((t) => t.id).join(', ')})`, id);
    }
  }
  const site = { ...c.site, terrain: c.site.terrain ? resolveTerrainRef(c.site.terrain, abs, bad) : undefined };
  const windDirection =
    c.windDirection.kind === 'fixed'
      ? c.windDirection
      : { kind: 'series' as const, file: abs(c.windDirection.file), columns: c.windDirection.columns, uncertainty_deg: c.windDirection.uncertainty_deg };
  const inflow = c.inflow.kind === 'series' ? { ...c.inflow, file: abs(c.inflow.file) } : c.inflow;
  if (inflow.kind === 'profile') {
    const ref = instruments.find((i) => i.id === inflow.instrument);
    if (!ref || ref.role !== 'profiler') {
      bad(['inflow', 'instrument'], `must name a profiler of this campaign (profilers: ${instruments.filter((i) => i.role === 'profiler').map((i) => i.id).join(', ') || 'none'})`, inflow.instrument);
    }
  }

  let windows = c.windows;
  if (windows.kind === 'list') {
    if ((windows.file === undefined) === (windows.items === undefined)) {
      bad(['windows'], 'a list of windows needs exactly one of file or items');
    }
    if (windows.file) windows = { ...windows, file: abs(windows.file) };
  } else if (windows.kind === 'segments') {
    const id = windows.turbine;
    const known = id === undefined || turbines.some((t) => t.id === id);
    if (!tSeries && known) bad(id ? ['windows', 'turbine'] : ['windows'], 'segment windows need the turbine series (turbine.series with yaw_deg)', id);
  } else if (windows.kind === 'fixed' && windows.anchor !== 'first-sample' && windows.anchor !== 'epoch') {
    if (!Number.isFinite(parseTime(windows.anchor))) {
      bad(['windows', 'anchor'], 'must be "first-sample", "epoch" or an ISO 8601 UTC time', windows.anchor);
    }
  }
  if (c.conditions) {
    c.conditions.bins.forEach((b, i) => {
      const where = ['conditions', 'bins', i];
      for (let k = 1; k < b.edges.length; k++) {
        if (!(b.edges[k] > b.edges[k - 1])) { bad([...where, 'edges'], 'edges must ascend', b.edges); break; }
      }
      // Angles are binned modulo 360 (a sector may cross north): their edges may span one turn at most.
      if (b.variable.endsWith('_deg') && b.edges[b.edges.length - 1] - b.edges[0] > 360) bad([...where, 'edges'], 'edges of an angle (_deg) may span 360 degrees at most (angles are binned modulo 360)', b.edges);
      const problem = conditionVariableProblem(b.variable, { turbine: !!tSeries, inflow: c.inflow.kind === 'series', direction: c.windDirection.kind === 'series' });
      if (problem) bad([...where, 'variable'], problem, b.variable);
    });
  }

  const campaign: Campaign = {
    ...c,
    sourceFile: file,
    baseDir,
    instruments,
    planes,
    site,
    turbines,
    turbine: turbines[0],
    windDirection,
    inflow: inflow as Campaign['inflow'],
    windows,
    output: { ...c.output, dir: abs(c.output.dir) },
  };
  if (problems.length === 0) {
    for (const e of plausibilityErrors(campaign)) bad(e.path, e.rule, e.received);
  }
  throwAll(file, problems);
  return campaign;
}

type Parsed = z.output<typeof campaignSchema>;
type Bad = (path: KeyPath, rule: string, received?: unknown) => void;

/**
 * The turbine list: the single `turbine` key first, then `turbines`. Ids must be unique, and no two rotors may
 * overlap: two towers closer than the sum of the rotor radii could hit each other's rotor when yawed (the rotor
 * turns about the tower, so the horizontal tower distance is what counts). Without any turbine a placeholder keeps
 * the rest of the checks going (the problem is reported).
 */
function resolveTurbines(c: Parsed, abs: (p: string) => string, bad: Bad): Turbine[] {
  const listed = [...(c.turbine ? [{ t: c.turbine, where: ['turbine'] as KeyPath }] : []), ...(c.turbines ?? []).map((t, i) => ({ t, where: ['turbines', i] as KeyPath }))];
  if (listed.length === 0) {
    bad(['turbines'], 'the campaign needs a turbine: give `turbine` or a list `turbines`');
    return [{ id: 'turbine', index: 0, position: [0, 0, 0], hubHeight_m: 100, rotorDiameter_m: 100, thrustCoefficient: 0.8 }];
  }
  const out: Turbine[] = [];
  for (const [index, { t, where }] of listed.entries()) {
    if (out.some((o) => o.id === t.id)) bad([...where, 'id'], 'turbine ids must be unique (a turbine is listed twice)', t.id);
    for (const o of out) {
      const dist = Math.hypot(t.position_m[0] - o.position[0], t.position_m[1] - o.position[1]);
      const reach = (t.rotorDiameter_m + o.rotorDiameter_m) / 2;
      if (dist < reach) {
        bad([...where, 'position_m'], `rotors overlap with turbine "${o.id}": towers ${dist.toFixed(1)} m apart, less than the sum of the rotor radii ${reach.toFixed(1)} m`, t.position_m);
      }
    }
    out.push({
      id: t.id, index, position: [...t.position_m], hubHeight_m: t.hubHeight_m, rotorDiameter_m: t.rotorDiameter_m,
      thrustCoefficient: t.thrustCoefficient as number | [number, number][],
      series: t.series ? { file: abs(t.series.file), columns: t.series.columns } : undefined,
    });
  }
  return out;
}

/** A plane's frame: a turbine's (origin at its tower base) or the site's (origin at the site origin). */
function planeFrame(frame: string | undefined, heights: 'base' | 'terrain' | 'site', turbines: Turbine[], where: KeyPath, bad: Bad): { turbineIndex: number; origin: Vec3; heights: 'base' | 'terrain' | 'site' } {
  if (frame === 'site') return { turbineIndex: -1, origin: [0, 0, 0], heights };
  const t = frame === undefined ? turbines[0] : turbines.find((x) => x.id === frame);
  if (!t) {
    bad(where, `no turbine with this id (known: ${turbines.map((x) => x.id).join(', ')}, or "site")`, frame);
    return { turbineIndex: 0, origin: [...turbines[0].position], heights };
  }
  return { turbineIndex: t.index, origin: [...t.position], heights };
}

/** The turbine whose series gives segment windows their state: windows.turbine, else the first with a series. */
function segmentTurbine(c: Parsed, turbines: Turbine[], bad: Bad): Turbine | undefined {
  const id = c.windows.kind === 'segments' ? c.windows.turbine : undefined;
  if (id === undefined) return turbines.find((t) => t.series) ?? turbines[0];
  const t = turbines.find((x) => x.id === id);
  if (!t) bad(['windows', 'turbine'], `no turbine with this id (known: ${turbines.map((x) => x.id).join(', ')})`, id);
  return t;
}

function resolveTerrainRef(t: NonNullable<Parsed['site']['terrain']>, abs: (p: string) => string, bad: Bad): TerrainRef {
  const format = t.format ?? (/\.tiff?$/i.test(t.file) ? 'geotiff' : 'xyz');
  if (t.crs !== undefined && t.crs !== 'site' && !/^EPSG:\d+$/i.test(t.crs)) bad(['site', 'terrain', 'crs'], 'must be "site" or "EPSG:<code>"', t.crs);
  return { file: abs(t.file), format, crs: t.crs, columns: t.columns, heightOffset_m: t.heightOffset_m };
}

function throwAll(file: string, problems: ConfigError[]): void {
  if (problems.length === 1) throw problems[0];
  if (problems.length > 1) throw new ConfigErrors(file, problems);
}

/** The JSON Schema of the campaign file (published as schema/campaign.schema.json). */
export function campaignJsonSchema(): unknown {
  return z.toJSONSchema(campaignSchema, { io: 'input', unrepresentable: 'any' });
}

export type { CampaignInput };

/** Each role has its settings and no other role's; plane scanners need planes. */
function checkRoles(instruments: Instrument[], planeCount: number, bad: (path: KeyPath, rule: string, received?: unknown) => void): void {
  const need = { profiler: 'profile', nacelle: 'nacelle', tracker: 'track' } as const;
  for (const ins of instruments) {
    const where = ['instruments', ins.index];
    for (const [role, key] of Object.entries(need)) {
      const has = ins[key] !== undefined;
      if (ins.role === role && !has) bad([...where, key], `an instrument with role ${role} needs its ${key} settings`);
      if (ins.role !== role && has) bad([...where, key], `${key} settings belong to role ${role}, but the instrument has role ${ins.role}`);
    }
    if (ins.orientationSeries && ins.beamFrame !== 'nacelle') bad([...where, 'orientationSeries'], 'an inclinometer series applies to instruments on the nacelle (beamFrame nacelle)');
    const n = ins.nacelle;
    if (n) {
      const upper = n.beams.filter((b) => b.elevation_deg > 0).length, lower = n.beams.filter((b) => b.elevation_deg < 0).length;
      if (n.beams.length === 3) bad([...where, 'nacelle', 'beams'], 'give 2 beams (one pair) or 4 (an upper and a lower pair)', n.beams.length);
      if (n.beams.length === 4 && (upper !== 2 || lower !== 2)) bad([...where, 'nacelle', 'beams'], '4 beams must form an upper pair (elevation > 0) and a lower pair (elevation < 0)');
    }
    const p = ins.profile;
    if (p?.pattern && p.mode === 'dbs' && p.pattern.azimuths_deg.length !== 4) {
      bad([...where, 'profile', 'pattern', 'azimuths_deg'], 'a DBS pattern has 4 slanted beams (add vertical: true for the fifth)', p.pattern.azimuths_deg);
    }
  }
  if (planeCount === 0 && instruments.some((i) => i.role === 'plane')) {
    bad(['planes'], 'plane scanners (role plane, the default) need at least one plane');
  }
}
