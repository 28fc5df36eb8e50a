/**
 * Wakes of several turbines in one plane and window. For every turbine whose wake crosses the plane (its wake
 * envelope, geometry/site.ts, reaches into the plane's extent), the field is seen from that turbine: coordinates
 * shifted into its rotor frame (x, y from its tower base, z from its base in the plane's height reference), cropped to
 * its wake's region, and analysed like a single turbine's (planeWindow.ts) with its own diameter, hub height, thrust
 * curve and series.
 *
 * Region of turbine j:
 * - laterally |y - y_j| <= r_j(dx) + D_j / 2 (its envelope with half a diameter to spare), and never past half the
 *   lateral distance to another turbine's wake seen in the same plane;
 * - horizontal planes: from half a diameter behind its rotor to the first turbine it wakes (beyond that the two wakes
 *   are one: that turbine's region); cross planes: a plane behind a turbine k that stands in j's wake belongs to k
 *   alone (the merged wake is reported as k's, with j named in its wakedBy).
 * On a cross plane, another turbine's wake whose envelope, with half a diameter to spare, reaches into j's region
 * (one not merged into it) pulls the fit of the region alone towards it (in the held-back cases of
 * test/sites-heldback.test.ts by 1.4-2.4 m at 6 D beside a wake 3 D away, by 14-30 m at 11 D beside one 3 sigma
 * away). When both take the campaign's inflow (their deficits share the free-stream reference), the neighbour's
 * fitted wake is divided out of j's region and j is fitted again, twice over (backfitting; the 6 D case comes within
 * 0.1 m of the truth); otherwise the row's reason says the centre may be pulled.
 * Inflow of turbine j, "taken from upstream of it, not from the free stream":
 * - horizontal planes: per lateral column, the mean u of the rows 2.5 D_j to 0.5 D_j upstream of its rotor (the free
 *   stream for an unwaked turbine, the waked flow for a waked one); an unwaked turbine whose upstream rows have no
 *   data (the plane starts behind it) takes the campaign's inflow instead;
 * - cross planes: an unwaked turbine uses the campaign's inflow (plane law, fixed or series); a waked one the u of
 *   the nearest cross plane of the same window lying between it and the turbine waking it, sampled at the same
 *   rotor-frame (y, z); without such a plane the row is flagged no_inflow.
 */
import type { Campaign, PlaneSpec, Turbine } from '../campaign/types.ts';
import { planeOrigin } from '../campaign/turbines.ts';
import { turbinesInFrame, wakeHalfWidth, wakingTurbines, type TurbineInFrame } from '../geometry/site.ts';
import type { Series } from '../io/series.ts';
import type { FieldResult } from '../retrieval/types.ts';
import { resolveWakeOptions, type WakeOptions } from './options.ts';
import { analysePlaneWindow, type InflowSpec, type PlaneWindowContext } from './planeWindow.ts';
import { sampleBilinear } from './profiles.ts';
import type { Gaussian2DFit, WakePlaneWindow } from './types.ts';

export interface SiteWakeInputs {
  inflowSeries?: Series;
  /** Each turbine's series by id (yaw_deg, optional power_kw, wind_direction_deg). */
  turbineSeries: Map<string, Series>;
}

/** One turbine's view of a field: the field in its rotor frame, cropped to its region, and its inflow. */
export interface TurbineView {
  turbine: Turbine;
  field: FieldResult;
  /** Plane-frame position of the turbine (tower base). */
  at: TurbineInFrame;
  upstream?: { uIn: Float64Array; hubSpeed_ms: number; from: string };
  wakedBy: string[];
  /** Turbines this one wakes that lie downstream of it in the plane's reach: where the deflection is read. */
  wakes: TurbineInFrame[];
  /** Cross planes: other turbines whose wakes reach into this one's region (not merged into it), by id. */
  reach: string[];
  note: string;
}

const planeOf = (c: Pick<Campaign, 'planes'>, f: FieldResult) => c.planes[f.planeIndex] ?? c.planes.find((p) => p.id === f.planeId)!;

/** The field's extent in its own coordinates: [yMin, yMax, sMin, sMax] (s = z for cross planes, x for horizontal). */
function extent(f: FieldResult): [number, number, number, number] {
  const g = f.grid;
  return [g.y0 - g.dy / 2, g.y0 + (g.ny - 0.5) * g.dy, g.z0 - g.dz / 2, g.z0 + (g.nz - 0.5) * g.dz];
}

/** Every turbine's view of one field (several turbines); `windowFields` are the other planes of the same window. */
export function turbineViews(f: FieldResult, c: Pick<Campaign, 'planes' | 'turbines'>, windowFields: readonly FieldResult[]): TurbineView[] {
  const plane = planeOf(c, f);
  const origin = planeOrigin(c, plane);
  const list = turbinesInFrame(c.turbines, f.direction_deg, origin, plane.heights ?? 'base');
  const waking = wakingTurbines(list);
  const [yMin, yMax, sMin, sMax] = extent(f);
  const cross = f.orientation === 'cross';
  // Candidates: turbines whose wake envelope enters the plane.
  const cand = list.filter((j) => {
    const R = j.diameter / 2;
    if (cross) {
      const r = wakeHalfWidth(j, f.x_m - j.x);
      return f.x_m - j.x > R && Number.isFinite(r) && j.y + r > yMin && j.y - r < yMax && j.zHub + R > sMin && j.zHub - R < sMax;
    }
    const reachEnd = Math.min(sMax, j.x + 25 * j.diameter);
    const r = wakeHalfWidth(j, Math.max(reachEnd - j.x, 1e-6));
    return Math.abs(f.z_m - j.zHub) < R && reachEnd > j.x + R && j.y + r > yMin && j.y - r < yMax;
  });
  const views: TurbineView[] = [];
  for (const j of cand) {
    const wakedBy = waking[j.index].map((i) => list[i].id);
    // Turbines j wakes (downstream of it, in its envelope), nearest first.
    const wakes = list.filter((k) => waking[k.index].includes(j.index)).sort((a, b) => a.x - b.x);
    let sEnd = sMax, note = '';
    if (cross) {
      // A plane behind a turbine standing in j's wake belongs to that turbine.
      const inBetween = wakes.find((k) => k.x + k.diameter / 2 < f.x_m && cand.includes(k));
      if (inBetween) continue;
    } else if (wakes.length && wakes[0].x < sMax) {
      sEnd = wakes[0].x;
      note = `region ends at ${wakes[0].id} (merged wakes beyond)`;
    }
    const dxEnd = cross ? f.x_m - j.x : sEnd - j.x;
    let half = wakeHalfWidth(j, Math.max(dxEnd, 1e-6)) + j.diameter / 2;
    for (const m of cand) if (m !== j && Math.abs(m.y - j.y) > j.diameter) half = Math.min(half, Math.abs(m.y - j.y) / 2);
    // Other wakes whose envelope, with half a diameter to spare as the regions take it, reaches into this region
    // (not those merged into it: wakedBy): a fit of the region alone is pulled towards them (see the file docblock).
    const reach = cross ? list.filter((k) => k !== j && !wakedBy.includes(k.id) && Math.abs(k.y - j.y) - (wakeHalfWidth(k, f.x_m - k.x) + k.diameter / 2) < half).map((k) => k.id) : [];
    const view = shiftedField(f, j, half, cross ? -Infinity : j.x + j.diameter / 2, sEnd);
    const t = c.turbines[j.index];
    const tv: TurbineView = { turbine: t, field: view, at: j, wakedBy, wakes, reach, note };
    if (!cross) {
      // An unwaked turbine whose upstream rows the plane does not cover (a plane starting behind it) takes the
      // campaign's inflow, its free stream, as on cross planes; a waked one never does.
      const up = upstreamRows(f, j, half);
      if (wakedBy.length || (up && up.hubSpeed_ms > 0)) tv.upstream = up;
    } else if (wakedBy.length) tv.upstream = upstreamPlane(f, j, list, waking[j.index][0], c, windowFields);
    views.push(tv);
  }
  return views;
}

/** The field seen from turbine j: coordinates from its tower base, u kept only inside its region. */
function shiftedField(f: FieldResult, j: TurbineInFrame, half: number, sFrom: number, sTo: number): FieldResult {
  const g = f.grid, cross = f.orientation === 'cross';
  const u = new Float64Array(f.u), su = new Float64Array(f.su);
  const yEff = new Float64Array(f.yEff), zEff = new Float64Array(f.zEff);
  const sShift = cross ? j.zBase : j.x;
  for (let iz = 0; iz < g.nz; iz++) {
    const s = g.z0 + iz * g.dz;
    for (let iy = 0; iy < g.ny; iy++) {
      const k = iy + iz * g.ny, y = g.y0 + iy * g.dy;
      if (Math.abs(y - j.y) > half || (!cross && (s < sFrom || s >= sTo))) { u[k] = NaN; su[k] = NaN; }
      yEff[k] -= j.y;
      zEff[k] -= sShift;
    }
  }
  return {
    ...f, u, su, yEff, zEff,
    x_m: cross ? f.x_m - j.x : NaN,
    z_m: cross ? NaN : f.z_m - j.zBase,
    grid: { ...g, y0: g.y0 - j.y, z0: g.z0 - sShift },
  };
}

/** Horizontal plane: per lateral column the mean u of the rows 2.5 D to 0.5 D upstream of turbine j. */
function upstreamRows(f: FieldResult, j: TurbineInFrame, half: number): TurbineView['upstream'] {
  const g = f.grid, D = j.diameter;
  const col = new Float64Array(g.ny).fill(NaN);
  let rows = 0;
  for (let iy = 0; iy < g.ny; iy++) {
    let s = 0, n = 0;
    for (let iz = 0; iz < g.nz; iz++) {
      const x = g.z0 + iz * g.dz;
      if (x < j.x - 2.5 * D || x > j.x - 0.5 * D) continue;
      const v = f.u[iy + iz * g.ny];
      if (Number.isFinite(v)) { s += v; n++; }
    }
    if (n > 0) col[iy] = s / n;
    rows = Math.max(rows, n);
  }
  // Columns without an upstream value take the nearest column's (the lateral profile is smooth upstream).
  const filled = fillNearest(col);
  const uIn = new Float64Array(g.ny * g.nz);
  for (let iz = 0; iz < g.nz; iz++) for (let iy = 0; iy < g.ny; iy++) uIn[iy + iz * g.ny] = filled[iy];
  let hs = 0, hn = 0;
  for (let iy = 0; iy < g.ny; iy++) {
    const y = g.y0 + iy * g.dy - j.y;
    if (Math.abs(y) <= Math.min(D / 2, half) && Number.isFinite(col[iy])) { hs += col[iy]; hn++; }
  }
  return { uIn, hubSpeed_ms: hn ? hs / hn : NaN, from: `rows ${(2.5).toFixed(1)} D to 0.5 D upstream of ${j.id} in the same plane (up to ${rows} rows per column)` };
}

function fillNearest(a: Float64Array): Float64Array {
  const out = new Float64Array(a);
  for (let i = 0; i < a.length; i++) {
    if (Number.isFinite(a[i])) continue;
    for (let d = 1; d < a.length; d++) {
      if (i - d >= 0 && Number.isFinite(a[i - d])) { out[i] = a[i - d]; break; }
      if (i + d < a.length && Number.isFinite(a[i + d])) { out[i] = a[i + d]; break; }
    }
  }
  return out;
}

/** Cross plane, waked turbine: u of the nearest cross plane between it and the turbine waking it. */
function upstreamPlane(f: FieldResult, j: TurbineInFrame, list: TurbineInFrame[], upstreamIndex: number, c: Pick<Campaign, 'planes' | 'turbines'>, windowFields: readonly FieldResult[]): TurbineView['upstream'] {
  const i = list[upstreamIndex];
  const dxI = j.x - i.x; // the upstream turbine's distance ahead of j (frames share their axes)
  let best: { q: FieldResult; at: TurbineInFrame } | undefined;
  for (const q of windowFields) {
    if (q === f || q.orientation !== 'cross') continue;
    const pq = planeOf(c, q);
    const atQ = turbinesInFrame(c.turbines, q.direction_deg, planeOrigin(c, pq), pq.heights ?? 'base')[j.index];
    const ahead = atQ.x - q.x_m; // how far the plane lies upstream of j
    if (ahead > j.diameter / 2 && ahead < dxI - i.diameter / 2 && (!best || ahead < best.at.x - best.q.x_m)) best = { q, at: atQ };
  }
  const n = f.grid.ny * f.grid.nz;
  if (!best) return { uIn: new Float64Array(n).fill(NaN), hubSpeed_ms: NaN, from: `no cross plane between ${i.id} and ${j.id} in this window` };
  const { q, at } = best, g = f.grid, uIn = new Float64Array(n);
  for (let iz = 0; iz < g.nz; iz++)
    for (let iy = 0; iy < g.ny; iy++) {
      // Same rotor-frame (y, z) of turbine j in both planes.
      const yj = g.y0 + iy * g.dy - j.y, zj = g.z0 + iz * g.dz - j.zBase;
      uIn[iy + iz * g.ny] = sampleBilinear(q.grid, q.u, yj + at.y, zj + at.zBase);
    }
  const hub = sampleBilinear(q.grid, q.u, at.y, at.zHub);
  return { uIn, hubSpeed_ms: hub, from: `plane ${q.planeId}, ${(at.x - q.x_m).toFixed(0)} m upstream of ${j.id}` };
}

/** Analysis context of one turbine (its size, thrust, series) for planeWindow.ts. */
export function turbineContext(t: Turbine, c: Pick<Campaign, 'inflow'>, inputs: SiteWakeInputs, options: Partial<WakeOptions> = {}): PlaneWindowContext {
  return {
    rotorDiameter_m: t.rotorDiameter_m, hubHeight_m: t.hubHeight_m, thrustCoefficient: t.thrustCoefficient,
    inflow: c.inflow as InflowSpec, inflowSeries: inputs.inflowSeries, turbineSeries: inputs.turbineSeries.get(t.id), options: resolveWakeOptions(options),
  };
}

/** The row id of a turbine's view: the plane's id for its own turbine, else plane@turbine. */
export function viewPlaneId(plane: Pick<PlaneSpec, 'id' | 'turbineIndex'>, t: Turbine): string {
  return plane.turbineIndex === t.index ? plane.id : `${plane.id}@${t.id}`;
}

/** Wake rows of every turbine whose wake crosses the field (see the file docblock). */
export function analyseSiteField(f: FieldResult, c: Pick<Campaign, 'planes' | 'turbines' | 'inflow'>, inputs: SiteWakeInputs, windowFields: readonly FieldResult[], options: Partial<WakeOptions> = {}): WakePlaneWindow[] {
  const plane = planeOf(c, f);
  const views = turbineViews(f, c, windowFields);
  const analyse = (v: TurbineView, field: FieldResult) => analysePlaneWindow({ ...field, planeId: viewPlaneId(plane, v.turbine) }, { ...turbineContext(v.turbine, c, inputs, options), upstream: v.upstream });
  let rows = views.map((v) => analyse(v, v.field));
  // Neighbouring wakes reaching into a region: divide their fitted wakes out and fit again, twice (each pass with
  // the others' latest fits). Only between turbines whose deficits share the free-stream reference (neither takes
  // its inflow from upstream), so that one's fitted deficit is the other's tail.
  const removable = views.map((v, i) => v.reach
    .map((id) => views.findIndex((w) => w.turbine.id === id))
    .filter((k) => k >= 0 && !v.upstream && !views[k].upstream));
  const removed = new Set<number>();
  for (let pass = 0; pass < 2 && removable.some((r) => r.length); pass++) {
    rows = views.map((v, i) => {
      const fits = removable[i].map((k) => ({ at: views[k].at, fit: rows[k].centre.ok ? rows[k].gaussian : null })).filter((n) => n.fit);
      if (!fits.length) return rows[i];
      removed.add(i);
      return analyse(v, withoutWakes(v, fits as { at: TurbineInFrame; fit: Gaussian2DFit }[]));
    });
  }
  return rows.map((row, i) => {
    const v = views[i];
    row.turbineId = v.turbine.id;
    row.wakedBy = v.wakedBy;
    row.inflowFrom = v.upstream?.from ?? `campaign inflow (${c.inflow.kind})`;
    const note = [v.note, v.reach.length ? `wake of ${v.reach.join(', ')} reaches into this turbine's region: ${removed.has(i) ? 'its fitted wake divided out before the fit' : 'its centre may be pulled towards it'}` : ''].filter(Boolean).join('; ');
    if (note) row.reason = row.reason ? `${row.reason}; ${note}` : note;
    row.centreAtTurbines = v.wakes.map((k) => centreAt(row, k.x - v.at.x, k.diameter));
    row.centreAtTurbines.forEach((e, n) => (e.turbineId = v.wakes[n].id));
    return row;
  });
}

/**
 * A view's field with neighbouring wakes divided out: u / prod_k (1 - G_k(y, z)), G_k the 2-D Gaussian deficit fitted
 * to neighbour k's view (without its offset), placed in the plane by its tower base; wakes superpose by product
 * (u = U prod_k (1 - d_k): multiplicative superposition, one of the usual wake-combination rules; common practice).
 * A factor below 0.05 (a cell the neighbour's fit all but empties) is left as it is.
 */
function withoutWakes(v: TurbineView, nb: { at: TurbineInFrame; fit: Gaussian2DFit }[]): FieldResult {
  const f = v.field, g = f.grid, u = new Float64Array(f.u);
  for (let iz = 0; iz < g.nz; iz++)
    for (let iy = 0; iy < g.ny; iy++) {
      const k = iy + iz * g.ny;
      if (!Number.isFinite(u[k])) continue;
      // Plane coordinates of the cell's samples (the view is shifted by its own tower base).
      const y = (Number.isFinite(f.yEff?.[k]) ? f.yEff![k] : g.y0 + iy * g.dy) + v.at.y;
      const z = (Number.isFinite(f.zEff?.[k]) ? f.zEff![k] : g.z0 + iz * g.dz) + v.at.zBase;
      let factor = 1;
      for (const { at, fit } of nb) {
        const p = fit.params, dy = y - (at.y + p.yc_m), dz = z - (at.zBase + p.zc_m);
        factor *= 1 - p.amplitude * Math.exp(-(dy * dy) / (2 * p.sigmaY_m * p.sigmaY_m) - (dz * dz) / (2 * p.sigmaZ_m * p.sigmaZ_m));
      }
      if (factor > 0.05) u[k] /= factor;
    }
  return { ...f, u };
}

/**
 * The measured lateral wake centre just upstream of a downstream turbine at distance dx (rotor frame of the wake's
 * turbine): horizontal planes, the standard-error-weighted mean of the track's centres in [dx - 1.5 D, dx); cross
 * planes, the fitted centre when the plane lies in that span.
 */
function centreAt(row: WakePlaneWindow, dx: number, D: number): { turbineId: string; x_m: number; yc_m: number; syc_m: number } {
  const out = { turbineId: '', x_m: dx, yc_m: NaN, syc_m: NaN };
  if (row.horizontalTrack) {
    const t = row.horizontalTrack;
    let sw = 0, sy = 0;
    for (let i = 0; i < t.x_m.length; i++) {
      if (!(t.x_m[i] >= dx - 1.5 * D && t.x_m[i] < dx) || !Number.isFinite(t.yc_m[i]) || !(t.syc_m[i] > 0)) continue;
      const w = 1 / (t.syc_m[i] * t.syc_m[i]);
      sw += w; sy += w * t.yc_m[i];
    }
    if (sw > 0) { out.yc_m = sy / sw; out.syc_m = Math.sqrt(1 / sw); }
  } else if (row.centre.ok && row.x_m >= dx - 1.5 * D && row.x_m < dx) {
    out.yc_m = row.centre.y_m; out.syc_m = row.centre.sy_m;
  }
  return out;
}
