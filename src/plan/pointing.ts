/**
 * Pointing table of one instrument for one plane: the reported azimuth, elevation and range (focus distance) that put
 * its beam on each cell centre it can serve, with its calibration applied (geometry/beam.ts steerTo, the inverse of
 * calibratedUnitVector + beamPoint + rangeOffset), in a short-slew scan order (scanOrder.ts), and the time of one
 * full pass over the plane: points * dwell + total slew / slew rate (closed tour).
 */
import type { Instrument, Vec3 } from '../campaign/types.ts';
import { steerTo } from '../geometry/beam.ts';
import { HARD_BEAM_FLAGS, type BeamCells } from './beamCells.ts';
import type { PlaneGeometry } from './planeGeometry.ts';
import { planScanOrder, slewAngle } from './scanOrder.ts';

export interface PointingRow {
  /** Position in the scan, from 0. */
  step: number;
  cell: number;
  iy: number;
  iz: number;
  /** Site-frame target (cell centre), metres. */
  target: Vec3;
  /** Reported (instrument-frame) angles and range to command, degrees and metres. */
  azimuth_deg: number;
  elevation_deg: number;
  range_m: number;
  /** Slew from the previous point (the first from the last: closed tour), degrees. */
  slew_deg: number;
  /** Time at which the dwell on this point starts, from the start of the pass, seconds. */
  start_s: number;
}

export interface PointingTable {
  instrumentId: string;
  planeId: string;
  rows: PointingRow[];
  /** Cells the instrument cannot serve (hard limits) and left out. */
  skipped: number;
  slew_deg: number;
  rasterSlew_deg: number;
  serpentineSlew_deg: number;
  /** Time of one full pass, seconds: rows * dwell + slew / rate. */
  passTime_s: number;
  rasterPassTime_s: number;
}

export function pointingTable(ins: Pick<Instrument, 'id' | 'calibration' | 'scan'>, position: Vec3, geom: PlaneGeometry, beams: BeamCells): PointingTable {
  const { ny } = geom.grid;
  const cells: number[] = [];
  for (let c = 0; c < beams.flags.length; c++) if (!(beams.flags[c] & HARD_BEAM_FLAGS)) cells.push(c);
  const pts = cells.map((c) => {
    const target: Vec3 = [geom.site[3 * c], geom.site[3 * c + 1], geom.site[3 * c + 2]];
    return { c, target, ...steerTo(position, ins.calibration, target) };
  });
  const row = cells.map((c) => Math.floor(c / ny));
  const col = cells.map((c) => c % ny);
  const so = planScanOrder(pts, row, col);
  const { dwell_s, slewRate_degs } = ins.scan;
  const rows: PointingRow[] = [];
  let t = 0;
  const n = so.order.length;
  for (let k = 0; k < n; k++) {
    const p = pts[so.order[k]];
    const slew = n > 1 ? slewAngle(pts[so.order[(k + n - 1) % n]], p) : 0;
    if (k > 0) t += slew / slewRate_degs;
    rows.push({
      step: k, cell: p.c, iy: p.c % ny, iz: Math.floor(p.c / ny), target: p.target,
      azimuth_deg: p.azimuth_deg, elevation_deg: p.elevation_deg, range_m: p.range_m, slew_deg: slew, start_s: t,
    });
    t += dwell_s;
  }
  return {
    instrumentId: ins.id,
    planeId: geom.plane.id,
    rows,
    skipped: beams.flags.length - cells.length,
    slew_deg: so.slew_deg,
    rasterSlew_deg: so.rasterSlew_deg,
    serpentineSlew_deg: so.serpentineSlew_deg,
    passTime_s: n * dwell_s + so.slew_deg / slewRate_degs,
    rasterPassTime_s: n * dwell_s + so.rasterSlew_deg / slewRate_degs,
  };
}
