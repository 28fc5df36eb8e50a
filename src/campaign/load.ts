/**
 * Reading and validating a campaign file. Validation happens here, once: the result is fully defaulted and resolved
 * (absolute paths, site-frame positions, planes in metres). Errors name the file, the key path, the rule and the
 * value received.
 */
import { readFileSync } from 'node:fs';
import { dirname, isAbsolute, resolve } from 'node:path';
import { parseDocument, LineCounter } from 'yaml';
import { z } from 'zod';
import { ConfigError } from '../errors.ts';
import { wgs84ToEnu } from '../geometry/geodetic.ts';
import { campaignSchema, type CampaignInput } from './schema.ts';
import type { Campaign, Instrument, PlaneSpec, Vec3 } from './types.ts';
import { parseTime } from '../io/time.ts';
import { conditionVariableProblem } from './conditionVariables.ts';

export function loadCampaignFile(path: string): Campaign {
  const abs = resolve(path);
  let text: string;
  try {
    text = readFileSync(abs, 'utf8');
  } catch (e) {
    throw new ConfigError(abs, '', `cannot read the campaign file: ${(e as Error).message}`);
  }
  return parseCampaignText(text, abs);
}

/** Parses YAML or JSON text (JSON is YAML) and resolves it; `file` names it in errors and anchors relative paths. */
export function parseCampaignText(text: string, file: string): Campaign {
  const lc = new LineCounter();
  const doc = parseDocument(text, { lineCounter: lc, prettyErrors: true });
  if (doc.errors.length > 0) {
    const err = doc.errors[0]!;
    const pos = err.linePos?.[0];
    throw new ConfigError(file, pos ? `line ${pos.line}` : '', `not valid YAML/JSON: ${err.message.split('\n')[0]}`);
  }
  return resolveCampaign(doc.toJS() as unknown, file);
}

function keyPathOf(path: PropertyKey[]): string {
  return path.map((p, i) => (typeof p === 'number' ? `[${p}]` : `${i ? '.' : ''}${String(p)}`)).join('');
}

function valueAt(obj: unknown, path: PropertyKey[]): unknown {
  let cur: unknown = obj;
  for (const p of path) {
    if (cur === null || typeof cur !== 'object') return undefined;
    cur = (cur as Record<PropertyKey, unknown>)[p];
  }
  return cur;
}

/** Validates a plain object (already parsed) and resolves it into a Campaign. */
export function resolveCampaign(raw: unknown, file: string): Campaign {
  const parsed = campaignSchema.safeParse(raw);
  if (!parsed.success) {
    const issue = deepestIssue(parsed.error.issues);
    throw new ConfigError(file, keyPathOf(issue.path), issue.message, valueAt(raw, issue.path));
  }
  const c = parsed.data;
  const baseDir = file === '<memory>' ? process.cwd() : dirname(file);
  const abs = (p: string) => (isAbsolute(p) ? p : resolve(baseDir, p));

  const ids = new Set<string>();
  const instruments: Instrument[] = c.instruments.map((ins, index) => {
    const where = `instruments[${index}]`;
    if (ids.has(ins.id)) throw new ConfigError(file, `${where}.id`, 'instrument ids must be unique', ins.id);
    ids.add(ins.id);
    let position: Vec3;
    if (ins.position_m && ins.position_wgs84) {
      throw new ConfigError(file, where, 'give either position_m or position_wgs84, not both');
    } else if (ins.position_m) {
      position = [...ins.position_m];
    } else if (ins.position_wgs84) {
      if (!c.site.origin_wgs84) {
        throw new ConfigError(file, `${where}.position_wgs84`, 'needs site.origin_wgs84 to place it in the site frame');
      }
      position = wgs84ToEnu(ins.position_wgs84, c.site.origin_wgs84);
    } else {
      throw new ConfigError(file, where, 'needs position_m (east, north, up metres) or position_wgs84');
    }
    return {
      id: ins.id,
      index,
      position,
      kind: ins.kind,
      pulsed: ins.pulsed,
      cw: ins.cw,
      calibration: ins.calibration,
      files: ins.files.map(abs),
      columns: ins.columns,
      radialVelocitySign: ins.radialVelocitySign,
      scan: ins.scan,
    };
  });
  if (instruments.length > 255) throw new ConfigError(file, 'instruments', 'at most 255 instruments', instruments.length);

  const D = c.turbine.rotorDiameter_m;
  const planeIds = new Set<string>();
  const planes: PlaneSpec[] = c.planes.map((p, index) => {
    const where = `planes[${index}]`;
    if (planeIds.has(p.id)) throw new ConfigError(file, `${where}.id`, 'plane ids must be unique', p.id);
    planeIds.add(p.id);
    if (p.orientation === 'cross') {
      if ((p.x_m === undefined) === (p.x_D === undefined)) {
        throw new ConfigError(file, where, 'a cross plane needs exactly one of x_m or x_D');
      }
      if (!p.z) throw new ConfigError(file, `${where}.z`, 'a cross plane needs its vertical extent z: {min, max}');
      const x_m = p.x_m ?? p.x_D! * D;
      if (x_m <= 0) throw new ConfigError(file, where, 'the plane must lie downstream of the rotor (x > 0)', x_m);
      return {
        id: p.id, index, orientation: 'cross', x_m, z_m: NaN, y: p.y, second: p.z, cell_m: p.cell_m, thickness_m: p.thickness_m,
      };
    }
    if (!p.xRange) throw new ConfigError(file, `${where}.xRange`, 'a horizontal plane needs its downstream extent xRange: {min, max}');
    return {
      id: p.id, index, orientation: 'horizontal', x_m: NaN, z_m: p.z_m ?? c.turbine.hubHeight_m, y: p.y, second: p.xRange,
      cell_m: p.cell_m, thickness_m: p.thickness_m,
    };
  });
  for (const p of planes) {
    const ny = Math.round((p.y.max - p.y.min) / p.cell_m[0]);
    const nz = Math.round((p.second.max - p.second.min) / p.cell_m[1]);
    if (ny * nz > 1_000_000) {
      throw new ConfigError(file, `planes[${p.index}].cell_m`, 'more than 1e6 cells in one plane; use larger cells', p.cell_m);
    }
  }
  if (c.qc.cnr_db.max <= c.qc.cnr_db.min) {
    throw new ConfigError(file, 'qc.cnr_db', 'max must be greater than min', c.qc.cnr_db);
  }

  const { series: tSeries, position_m, ...turbineRest } = c.turbine;
  const windDirection =
    c.windDirection.kind === 'fixed'
      ? c.windDirection
      : { kind: 'series' as const, file: abs(c.windDirection.file), columns: c.windDirection.columns };
  const inflow = c.inflow.kind === 'series' ? { ...c.inflow, file: abs(c.inflow.file) } : c.inflow;

  let windows = c.windows;
  if (windows.kind === 'list') {
    if ((windows.file === undefined) === (windows.items === undefined)) {
      throw new ConfigError(file, 'windows', 'a list of windows needs exactly one of file or items');
    }
    if (windows.file) windows = { ...windows, file: abs(windows.file) };
  } else if (windows.kind === 'segments') {
    if (!tSeries) throw new ConfigError(file, 'windows', 'segment windows need the turbine series (turbine.series with yaw_deg)');
  } else if (windows.kind === 'fixed' && windows.anchor !== 'first-sample' && windows.anchor !== 'epoch') {
    if (!Number.isFinite(parseTime(windows.anchor))) {
      throw new ConfigError(file, 'windows.anchor', 'must be "first-sample", "epoch" or an ISO 8601 UTC time', windows.anchor);
    }
  }
  if (c.conditions) {
    c.conditions.bins.forEach((b, i) => {
      const where = `conditions.bins[${i}]`;
      for (let k = 1; k < b.edges.length; k++) {
        if (!(b.edges[k] > b.edges[k - 1])) throw new ConfigError(file, `${where}.edges`, 'edges must ascend', b.edges);
      }
      const problem = conditionVariableProblem(b.variable, { turbine: !!tSeries, inflow: c.inflow.kind === 'series', direction: c.windDirection.kind === 'series' });
      if (problem) throw new ConfigError(file, `${where}.variable`, problem, b.variable);
    });
  }

  return {
    ...c,
    sourceFile: file,
    baseDir,
    instruments,
    planes,
    turbine: { ...turbineRest, position: [...position_m], series: tSeries ? { file: abs(tSeries.file), columns: tSeries.columns } : undefined },
    windDirection,
    inflow: inflow as Campaign['inflow'],
    windows,
  };
}

/** For unions zod reports the union itself; dig into the branch that got furthest so the message names a real key. */
function deepestIssue(issues: z.core.$ZodIssue[]): z.core.$ZodIssue {
  let best = issues[0]!;
  const visit = (list: z.core.$ZodIssue[], prefix: PropertyKey[]) => {
    for (const iss of list) {
      const full = { ...iss, path: [...prefix, ...iss.path] } as z.core.$ZodIssue;
      if (iss.code === 'invalid_union' && 'errors' in iss) {
        for (const branch of (iss as unknown as { errors: z.core.$ZodIssue[][] }).errors) visit(branch, full.path);
      } else if (full.path.length > best.path.length) {
        best = full;
      }
    }
  };
  visit(issues, []);
  return best;
}

/** The JSON Schema of the campaign file (published as schema/campaign.schema.json). */
export function campaignJsonSchema(): unknown {
  return z.toJSONSchema(campaignSchema, { io: 'input', unrepresentable: 'any' });
}

export type { CampaignInput };
