/**
 * Trust map of one plane for a given set of instrument positions: beams to every cell, per-cell amplification and
 * flags, and the resolved fractions of the rotor disk and of the whole plane.
 */
import type { Instrument, Vec3 } from '../campaign/types.ts';
import type { RotorFrame } from '../geometry/frames.ts';
import { beamCells, type BeamCells } from './beamCells.ts';
import { assessCells, passFractions, type CellTrust, type Fractions } from './cellTrust.ts';
import type { PlaneGeometry } from './planeGeometry.ts';
import type { PlanSettings } from './settings.ts';
import { planeComponents } from './components.ts';

export interface PlaneTrust {
  geometry: PlaneGeometry;
  /** Per instrument (campaign order). */
  beams: BeamCells[];
  trust: CellTrust;
  /** Fractions over the cells inside the rotor outline. */
  rotor: Fractions;
  /** Fractions over all cells of the plane. */
  plane: Fractions;
}

export function planeTrust(
  instruments: readonly Pick<Instrument, 'kind' | 'cw' | 'pulsed'>[],
  positions: readonly Vec3[],
  geom: PlaneGeometry,
  frame: RotorFrame,
  s: PlanSettings,
): PlaneTrust {
  const beams = instruments.map((ins, i) => beamCells(ins, positions[i], geom, frame, s));
  const trust = assessCells(beams, geom.grid.ny * geom.grid.nz, { ...s, components: planeComponents(geom.plane, instruments.length) });
  return { geometry: geom, beams, trust, rotor: passFractions(trust, geom.inRotor), plane: passFractions(trust) };
}
