/**
 * One instrument's beams to every cell centre of a plane: the rotor-frame unit vector (a row of the retrieval's
 * matrix A), the beam's true elevation and range, its probe length and footprint, and what stops the beam from
 * serving the cell.
 *
 * Hard limits (the instrument cannot measure there): the cell centre or the instrument lies lower than the ground
 * clearance (a straight beam between two points above flat ground stays above it, so the end points decide), the
 * beam is below the minimum elevation, or longer than the maximum range; with a terrain model, the beam passes below
 * the ground between instrument and cell (terrain, geometry/terrain.ts segmentClear); the beam passes through the
 * rotor disk of a turbine (rotor: disks facing the planned wind, geometry/site.ts segmentThroughDisk; a beam
 * through a rotor is chopped by the blades and measures the rotor's flow, not the plane's). Soft flags (the beam measures, but the cell
 * is not to be trusted): the probe footprint spans more than the allowed cells, or a CW focus lies beyond the
 * validity of the probe formula. Straight beams in the flat site frame; Earth curvature is not applied here.
 */
import type { Instrument, Vec3 } from '../campaign/types.ts';
import { DEG } from '../geometry/beam.ts';
import { dirToRotor, type RotorFrame } from '../geometry/frames.ts';
import { probeFootprint } from './footprint.ts';
import { segmentClear, type Terrain } from '../geometry/terrain.ts';
import { segmentThroughDisk } from '../geometry/site.ts';
import type { PlaneGeometry } from './planeGeometry.ts';
import { probeLength } from '../geometry/probe.ts';
import type { PlanSettings } from './settings.ts';

/** Why a beam does not serve, or does not serve well, a cell (bit flags). */
export const BeamFlag = {
  /** The cell centre or the instrument is below the ground clearance. Hard. */
  ground: 1,
  /** Beam elevation below plan.minElevation_deg. Hard. */
  elevation: 2,
  /** Range beyond plan.maxRange_m (or zero). Hard. */
  range: 4,
  /** Probe footprint spans more than plan.maxFootprintCells cells. Soft. */
  footprint: 8,
  /** CW focus beyond the validity of the Lorentzian probe formula. Soft. */
  probeModel: 16,
  /** The beam passes below the terrain between instrument and cell. Hard. */
  terrain: 32,
  /** The beam passes through a turbine's rotor disk. Hard. */
  rotor: 64,
} as const;
export const HARD_BEAM_FLAGS = BeamFlag.ground | BeamFlag.elevation | BeamFlag.range | BeamFlag.terrain | BeamFlag.rotor;

/** Obstacles of the beams besides flat ground: a terrain model and rotor disks (hub in the site frame, radius). */
export interface BeamObstacles {
  terrain?: Terrain;
  rotors?: readonly { id: string; hub: Vec3; radius_m: number }[];
}

export interface BeamCells {
  /** Rotor-frame unit vectors from the instrument to each cell centre, 3 per cell. */
  dir: Float64Array;
  /** True (site-frame) elevation, degrees. */
  elevation_deg: Float64Array;
  /** Distance from the beam origin to the cell centre, metres. */
  range_m: Float64Array;
  /** Probe length (FWHM along the beam), metres. */
  probe_m: Float64Array;
  /** Probe length projected on the plane, metres. */
  footprint_m: Float64Array;
  /** Largest span of the projected probe along a plane axis, in cells. */
  footprintCells: Float64Array;
  /** BeamFlag bits. */
  flags: Uint8Array;
}

type BeamSettings = Pick<PlanSettings, 'minElevation_deg' | 'maxRange_m' | 'cwValidityFraction' | 'maxFootprintCells' | 'groundClearance_m' | 'groundLevel_m' | 'obstacles'>;

export function beamCells(ins: Pick<Instrument, 'kind' | 'cw' | 'pulsed'>, position: Vec3, geom: PlaneGeometry, frame: RotorFrame, s: BeamSettings, obstacles: BeamObstacles = s.obstacles ?? {}): BeamCells {
  const n = geom.grid.ny * geom.grid.nz;
  const out: BeamCells = {
    dir: new Float64Array(3 * n),
    elevation_deg: new Float64Array(n),
    range_m: new Float64Array(n),
    probe_m: new Float64Array(n),
    footprint_m: new Float64Array(n),
    footprintCells: new Float64Array(n),
    flags: new Uint8Array(n),
  };
  const maxRange = ins.kind === 'cw' ? s.maxRange_m.cw : s.maxRange_m.pulsed;
  const pulsedLength = ins.kind === 'pulsed' ? probeLength(ins, 1).length_m : NaN; // range-independent
  const terrain = obstacles.terrain && !obstacles.terrain.flat ? obstacles.terrain : undefined;
  const groundAt = (e: number, n: number) => (terrain ? terrain.heightAt(e, n) : s.groundLevel_m);
  const instrLow = position[2] - groundAt(position[0], position[1]) < 0;
  // Rotor disks, except one whose hub the instrument sits at (a nacelle-mounted instrument).
  const rotors = (obstacles.rotors ?? []).filter((r) => Math.hypot(r.hub[0] - position[0], r.hub[1] - position[1], r.hub[2] - position[2]) > r.radius_m);
  const cellPoint = new Float64Array(3);
  for (let i = 0; i < n; i++) {
    const dE = geom.site[3 * i] - position[0], dN = geom.site[3 * i + 1] - position[1], dU = geom.site[3 * i + 2] - position[2];
    const r = Math.hypot(dE, dN, dU);
    out.range_m[i] = r;
    let flags = 0;
    if (!(r > 0)) {
      out.dir.fill(NaN, 3 * i, 3 * i + 3);
      out.elevation_deg[i] = NaN;
      out.probe_m[i] = out.footprint_m[i] = out.footprintCells[i] = NaN;
      out.flags[i] = BeamFlag.range;
      continue;
    }
    const site: Vec3 = [dE / r, dN / r, dU / r];
    const rot = dirToRotor(frame, site);
    out.dir[3 * i] = rot[0]; out.dir[3 * i + 1] = rot[1]; out.dir[3 * i + 2] = rot[2];
    const el = Math.asin(Math.max(-1, Math.min(1, site[2]))) / DEG;
    out.elevation_deg[i] = el;
    const ce = geom.site[3 * i], cn = geom.site[3 * i + 1], cu = geom.site[3 * i + 2];
    if (instrLow || !(cu - groundAt(ce, cn) >= s.groundClearance_m)) flags |= BeamFlag.ground;
    cellPoint[0] = ce; cellPoint[1] = cn; cellPoint[2] = cu;
    if (terrain && !(flags & BeamFlag.ground) && !segmentClear(terrain, position, cellPoint)) flags |= BeamFlag.terrain;
    for (const r of rotors) if (Number.isFinite(segmentThroughDisk(position, cellPoint, r.hub, r.radius_m, frame.dE, frame.dN))) flags |= BeamFlag.rotor;
    if (el < s.minElevation_deg) flags |= BeamFlag.elevation;
    if (r > maxRange) flags |= BeamFlag.range;
    let L = pulsedLength;
    if (ins.kind === 'cw') {
      const p = probeLength(ins, r, s.cwValidityFraction);
      L = p.length_m;
      if (!p.valid) flags |= BeamFlag.probeModel;
    }
    out.probe_m[i] = L;
    const fp = probeFootprint(rot, L, geom.normal, geom.axis1, geom.axis2, geom.grid.dy, geom.grid.dz);
    out.footprint_m[i] = fp.length_m;
    out.footprintCells[i] = fp.cells;
    if (fp.cells > s.maxFootprintCells) flags |= BeamFlag.footprint;
    out.flags[i] = flags;
  }
  return out;
}
