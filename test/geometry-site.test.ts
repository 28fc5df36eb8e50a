/**
 * Turbines seen from a window's frame, which turbine stands in which wake, and beams through rotor disks; the
 * planner's beam flags for rotors and terrain. Analytic cases with the geometry worked out in the comments.
 */
import { describe, expect, it } from 'vitest';
import type { Turbine } from '../src/campaign/types.ts';
import { isWakedBy, segmentThroughDisk, turbinesInFrame, wakingTurbines } from '../src/geometry/site.ts';
import { rotorFrame } from '../src/geometry/frames.ts';
import { GridTerrain } from '../src/geometry/terrain.ts';
import { beamCells, BeamFlag } from '../src/plan/beamCells.ts';
import { planeGeometry } from '../src/plan/planeGeometry.ts';

const T = (id: string, index: number, e: number, n: number, u = 0): Turbine => ({ id, index, position: [e, n, u], hubHeight_m: 90, rotorDiameter_m: 90, thrustCoefficient: 0.8 });
const row = [T('A', 0, 0, 0), T('B', 1, 450, 0, 8), T('C', 2, 900, 0), T('S', 3, 450, 400)];

describe('turbines in a window frame', () => {
  it('wind from the west: downstream is east, left is north (frames.ts convention)', () => {
    const f = turbinesInFrame(row, 270, [0, 0, 0]);
    expect(f[1].x).toBeCloseTo(450, 9);
    expect(f[1].y).toBeCloseTo(0, 9);
    expect(f[3].y).toBeCloseTo(400, 9); // north of the row = left looking east
    expect(f[1].zBase).toBe(8);
    expect(f[1].zHub).toBe(98);
    expect(turbinesInFrame(row, 270, [0, 0, 0], 'terrain')[1].zHub).toBe(90);
  });
  it('wind from the north: the row lies across the wind, B is 450 m to the left (east) of A', () => {
    const f = turbinesInFrame(row, 0, [0, 0, 0]);
    expect(f[1].x).toBeCloseTo(0, 9);
    expect(f[1].y).toBeCloseTo(450, 9);
  });
  it('finds who stands in whose wake: the row aligned with the wind, the side turbine free', () => {
    // Envelope at 450 m: R + 0.1 * 450 = 90 m; B at 0 m lateral offset is inside; S at 400 m is not.
    const f = turbinesInFrame(row, 270, [0, 0, 0]);
    expect(wakingTurbines(f)).toEqual([[], [0], [1, 0], []]);
    // Wind turned 20 degrees: B lies 450 sin 20 = 154 m to the side of A, beyond 450 cos 20 * 0.1 + 45 + 45 = 132 m.
    const g = turbinesInFrame(row, 290, [0, 0, 0]);
    expect(isWakedBy(g[1], g[0])).toBe(false);
  });
});

describe('beams through rotor disks', () => {
  it('a segment crossing the rotor plane within the radius hits it; beside it or short of it misses', () => {
    // Wind from the west: the disk of B (hub (450, 0, 98), R 45) lies in the north-south vertical plane e = 450.
    const hub = [450, 0, 98], { dE, dN } = rotorFrame(270, [0, 0, 0]);
    expect(segmentThroughDisk([400, -10, 100], [500, 10, 100], hub, 45, dE, dN)).toBeCloseTo(0.5, 12);
    expect(segmentThroughDisk([400, 60, 100], [500, 60, 100], hub, 45, dE, dN)).toBeNaN(); // 60 m > 45 m to the side
    expect(segmentThroughDisk([300, 0, 98], [440, 0, 98], hub, 45, dE, dN)).toBeNaN(); // stops before the rotor
  });
  it('the planner flags the beams through a rotor and those behind a hill', () => {
    const plane = { id: 'p', index: 0, orientation: 'horizontal' as const, x_m: NaN, z_m: 98, y: { min: -15, max: 15 }, second: { min: 600, max: 630 }, cell_m: [30, 30] as [number, number], thickness_m: 20 };
    const frame = rotorFrame(270, [0, 0, 0]);
    const geom = planeGeometry(plane, frame, 98, 90);
    const s = { minElevation_deg: -90, maxRange_m: { pulsed: 10000, cw: 300 }, cwValidityFraction: 0.5, maxFootprintCells: 100, groundClearance_m: 2, groundLevel_m: 0 };
    const ins = { kind: 'pulsed' as const, pulsed: { pulseFwhm_ns: 200, gateLength_m: 30 }, cw: { wavelength_m: 1.565e-6, apertureRadius_m: 0.028 } };
    // From (300, 0, 98) to the cell (615, 0, 98): straight through B's hub at e = 450.
    const rotors = [{ id: 'B', hub: [450, 0, 98] as [number, number, number], radius_m: 45 }];
    expect(beamCells(ins, [300, 0, 98], geom, frame, s, { rotors }).flags[0] & BeamFlag.rotor).toBe(BeamFlag.rotor);
    expect(beamCells(ins, [300, 200, 98], geom, frame, s, { rotors }).flags[0] & BeamFlag.rotor).toBe(0);
    // A 120 m hill at e = 450 between an instrument at (300, 0, 2) and the cell at 98 m: blocked by terrain.
    const hill = new GridTerrain({ e0: 0, n0: -100, de: 10, dn: 10, ne: 101, nn: 21, heights: Float64Array.from({ length: 101 * 21 }, (_, k) => Math.max(0, 120 - 2 * Math.abs((k % 101) * 10 - 450))) });
    expect(beamCells(ins, [300, 0, 2], geom, frame, s, { terrain: hill }).flags[0] & BeamFlag.terrain).toBe(BeamFlag.terrain);
    expect(beamCells(ins, [700, 0, 2], geom, frame, s, { terrain: hill }).flags[0] & BeamFlag.terrain).toBe(0);
  });
});
