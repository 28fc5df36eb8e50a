/**
 * What a map of one field needs, kept small: the normalised streamwise speed u/u_inf (or u where no inflow
 * normalises it), the reason per cell where it is missing, the in-plane components with the cells where w was
 * assumed, and the wake's centre, width and track. A run keeps one of these per panel of its multi-panel figures
 * (single precision), never the field itself; a PanelField may stand for a window or for a condition bin.
 */
import type { Campaign } from '../campaign/types.ts';
import { siteTracks } from './turbineMarks.ts';
import type { GridSpec } from '../grid/grid.ts';
import { MaskReason, type FieldResult } from '../retrieval/types.ts';
import { deficitField } from '../wake/deficit.ts';
import type { WakePlaneWindow } from '../wake/types.ts';
import type { View } from './mapLayers.ts';

/** Mask code of cells without u/u_inf because the window has no inflow reference (beyond the retrieval's codes). */
export const NO_INFLOW_CODE = 254;

export interface PanelField {
  planeId: string;
  orientation: 'cross' | 'horizontal';
  /** Window (or bin) number and its start, Unix seconds. */
  index: number;
  /** A condition bin (ensemble of windows) rather than a window, with its label and number of windows. */
  ensemble: boolean;
  label: string;
  members: number;
  start_s: number;
  end_s: number;
  direction_deg: number;
  yawOffset_deg: number;
  grid: GridSpec;
  /** u/u_inf where normalised, else NaN (codes say why). */
  values: Float32Array;
  /** u, m/s (for runs without any inflow reference). */
  u: Float32Array;
  normalised: boolean;
  /** Reason per cell where `values` is missing: the u mask, or NO_INFLOW_CODE. */
  codes: Uint8Array;
  /** Reason per cell where u is missing. */
  codesU: Uint8Array;
  v: Float32Array;
  w: Float32Array;
  /** 1 where w was assumed zero (its arrow shows v only). */
  assumedW: Uint8Array;
  /** Accepted samples per cell (for the crop of horizontal planes). */
  hasData: Uint8Array;
  centre?: { y: number; z: number };
  diskCentre?: { y: number; z: number };
  ellipse?: { y: number; z: number; ry: number; rz: number };
  /** Horizontal planes: lateral wake centre per downstream row. */
  track?: { x: number[]; yc: number[] };
}

/**
 * The panel of one field with its wake row (if any). The row's deficit is used when present; a row kept without
 * it (the wake stage drops the grid-sized arrays) is completed from its inflow profile.
 */
export function panelField(f: FieldResult, wake: WakePlaneWindow | undefined, site?: { campaign: Pick<Campaign, 'planes' | 'turbines'>; rows: readonly WakePlaneWindow[] }): PanelField {
  const n = f.grid.ny * f.grid.nz;
  let deficit: ArrayLike<number> | undefined;
  if (wake && wake.inflow.ok) deficit = wake.deficit.length === n ? wake.deficit : deficitField(f, wake.inflow).deficit;
  const normalised = !!deficit && Array.prototype.some.call(deficit, Number.isFinite);
  const values = new Float32Array(n), u = new Float32Array(n), v = new Float32Array(n), w = new Float32Array(n);
  const codes = new Uint8Array(n), assumedW = new Uint8Array(n), hasData = new Uint8Array(n);
  for (let i = 0; i < n; i++) {
    u[i] = f.u[i];
    values[i] = normalised ? 1 - deficit![i] : NaN;
    codes[i] = f.maskU[i] || (normalised ? 0 : Number.isFinite(f.u[i]) ? NO_INFLOW_CODE : 0);
    if (f.maskW[i] === MaskReason.assumedZero) {
      assumedW[i] = 1;
      w[i] = 0;
    } else w[i] = f.w[i];
    v[i] = f.v[i];
    hasData[i] = f.samples[i] > 0 || Number.isFinite(f.u[i]) ? 1 : 0;
  }
  const p: PanelField = {
    planeId: f.planeId, orientation: f.orientation, index: f.window.index, start_s: f.window.start_s, end_s: f.window.end_s,
    ensemble: f.window.kind === 'ensemble', label: f.window.label ?? '', members: f.window.members?.length ?? 0,
    direction_deg: f.direction_deg, yawOffset_deg: wake?.yawOffset_deg ?? NaN, grid: { ...f.grid },
    values, u, normalised, codes, codesU: Uint8Array.from(f.maskU), v, w, assumedW, hasData,
  };
  if (wake && f.orientation === 'cross') {
    const g = wake.gaussian?.params;
    if (wake.centre.ok) p.centre = { y: wake.centre.y_m, z: wake.centre.z_m };
    if (wake.centre.ok && g) p.ellipse = { y: g.yc_m, z: g.zc_m, ry: g.sigmaY_m, rz: g.sigmaZ_m };
    if (wake.diskCentre.ok) p.diskCentre = { y: wake.diskCentre.y_m, z: wake.diskCentre.z_m };
  }
  if (wake?.horizontalTrack) p.track = { x: [...wake.horizontalTrack.x_m], yc: [...wake.horizontalTrack.yc_m] };
  // Several turbines: every turbine's wake track, in the plane's coordinates (render/turbineMarks.ts).
  const plane = site?.campaign.planes[f.planeIndex];
  if (site && plane && f.orientation === 'horizontal' && site.rows.length) p.track = siteTracks(site.campaign, plane, f.direction_deg, site.rows);
  return p;
}

/**
 * The part of a horizontal plane worth showing: the cells with data (padded by one cell), widened to include the
 * turbine when it stands within `reach_m` of them, so the map starts at the rotor when the data start near it.
 */
export function croppedView(g: GridSpec, hasData: ArrayLike<number>[], turbine?: { y: number; x: number; radius: number; reach_m: number }): View | undefined {
  let iyLo = Infinity, iyHi = -Infinity, izLo = Infinity, izHi = -Infinity;
  for (const d of hasData) {
    for (let i = 0; i < g.ny * g.nz; i++) {
      if (!d[i]) continue;
      const iy = i % g.ny, iz = (i - iy) / g.ny;
      iyLo = Math.min(iyLo, iy); iyHi = Math.max(iyHi, iy); izLo = Math.min(izLo, iz); izHi = Math.max(izHi, iz);
    }
  }
  if (!Number.isFinite(iyLo)) return undefined;
  const v: View = {
    yLo: g.y0 + (Math.max(0, iyLo - 1) - 0.5) * g.dy,
    yHi: g.y0 + (Math.min(g.ny - 1, iyHi + 1) + 0.5) * g.dy,
    zLo: g.z0 + (Math.max(0, izLo - 1) - 0.5) * g.dz,
    zHi: g.z0 + (Math.min(g.nz - 1, izHi + 1) + 0.5) * g.dz,
  };
  if (turbine) {
    const dz = Math.max(0, v.zLo - turbine.x, turbine.x - v.zHi), dy = Math.max(0, v.yLo - turbine.y, turbine.y - v.yHi);
    if (Math.hypot(dy, dz) <= turbine.reach_m) {
      const margin = Math.max(g.dz, turbine.radius * 0.3);
      v.zLo = Math.min(v.zLo, turbine.x - margin);
      v.zHi = Math.max(v.zHi, turbine.x + margin);
      v.yLo = Math.min(v.yLo, turbine.y - turbine.radius - g.dy / 2);
      v.yHi = Math.max(v.yHi, turbine.y + turbine.radius + g.dy / 2);
    }
  }
  return v;
}
