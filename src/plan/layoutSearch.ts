/**
 * Layout search: move the instruments that have candidate positions (plan.candidates), evaluate each combination
 * with the same trust kernels as the trust maps (beamCells + assessCells), and rank them.
 *
 * Score of a layout: the fraction of the region cells (rotor disk of cross planes, rotor shadow band of horizontal
 * planes; pooled over all planes) where every target component passes (components.ts: u, v, w, or u, v);
 * ties are broken by the fraction of all plane cells where all three pass, then by the u-v fraction of the rotor
 * disk. When the number of combinations exceeds plan.maxCombinations, a seeded random sample of that size is
 * evaluated (reported as `sampled`). Layouts that put two instruments within 1 m of each other are skipped.
 * The campaign's own layout is scored the same way; gain = best minus own, in fraction points.
 */
import type { Instrument, Vec3 } from '../campaign/types.ts';
import type { RotorFrame } from '../geometry/frames.ts';
import { beamCells, type BeamCells } from './beamCells.ts';
import { candidatePositions } from './candidates.ts';
import { assessCells, passFractions, poolFractions, type Fractions } from './cellTrust.ts';
import { combinations } from './combinations.ts';
import type { PlaneGeometry } from './planeGeometry.ts';
import type { PlanSettings } from './settings.ts';
import { planeComponents } from './components.ts';

export interface LayoutScore {
  /** Site-frame positions per instrument (campaign order), metres. */
  positions: Vec3[];
  /** Candidate index per instrument; -1 = the instrument stays at its campaign position. */
  choice: number[];
  /** Pooled over all planes: the cells inside the rotor outline. */
  rotor: Fractions;
  /** Pooled over all planes: every cell. */
  plane: Fractions;
  perPlane: { planeId: string; rotor: Fractions; plane: Fractions }[];
}

export interface LayoutSearchResult {
  /** Instruments that move, with their candidate counts. */
  movable: { instrumentId: string; candidates: number }[];
  baseline: LayoutScore;
  /** Best layouts, best first (at most plan.top). */
  ranked: LayoutScore[];
  /** Number of possible combinations, evaluated ones, and those skipped as coincident. */
  total: number;
  evaluated: number;
  skippedCoincident: number;
  sampled: boolean;
  seed: number;
  /** Best minus own layout: rotor-disk and whole-plane fractions with all three components passing. */
  gain: { rotorAll: number; planeAll: number };
}

/** Cells of beams the layout search keeps in memory (about 25 bytes each). */
export const CACHE_CELLS = 4_000_000;

type Ins = Pick<Instrument, 'id' | 'kind' | 'cw' | 'pulsed' | 'position'>;

type Beams = Pick<BeamCells, 'dir' | 'flags'>;
/** Beams of instrument i at positions[i] to the cells of plane geoms[planeIndex] (a cache may stand behind it). */
export type BeamSource = (i: number, positions: readonly Vec3[], planeIndex: number) => Beams;

/** Scores one layout over all planes (the condition number is not needed and not computed). */
export function scoreLayout(
  instruments: readonly Ins[],
  positions: Vec3[],
  geoms: readonly PlaneGeometry[],
  frame: RotorFrame,
  s: PlanSettings,
  choice: number[],
  source: BeamSource = (i, pos, gi) => beamCells(instruments[i], pos[i], geoms[gi], frame, s),
): LayoutScore {
  const perPlane = geoms.map((g, gi) => {
    const beams = instruments.map((_, i) => source(i, positions, gi));
    const t = assessCells(beams, g.grid.ny * g.grid.nz, { ...s, components: planeComponents(g.plane, instruments.length) }, false);
    return { planeId: g.plane.id, rotor: passFractions(t, g.inRotor), plane: passFractions(t) };
  });
  return { positions, choice, rotor: poolFractions(perPlane.map((p) => p.rotor)), plane: poolFractions(perPlane.map((p) => p.plane)), perPlane };
}

const key = (x: number) => (Number.isNaN(x) ? -1 : x);
export function compareLayouts(a: LayoutScore, b: LayoutScore): number {
  return (
    key(b.rotor.all) - key(a.rotor.all) ||
    key(b.plane.all) - key(a.plane.all) ||
    key(b.rotor.u + b.rotor.v) - key(a.rotor.u + a.rotor.v)
  );
}

export function searchLayouts(instruments: readonly Ins[], geoms: readonly PlaneGeometry[], frame: RotorFrame, s: PlanSettings, file = '<memory>'): LayoutSearchResult {
  const own = instruments.map((i) => [...i.position] as Vec3);
  const baseline = scoreLayout(instruments, own, geoms, frame, s, instruments.map(() => -1));
  const movableIdx = instruments.map((ins, i) => (s.candidates[ins.id] ? i : -1)).filter((i) => i >= 0);
  const cand = movableIdx.map((i) => candidatePositions(instruments[i], s.candidates[instruments[i].id], file));
  const { combos, total, sampled } = combinations(cand.map((c) => c.length), s.maxCombinations, s.seed);
  // Beams depend only on their own instrument's position: cache them per (instrument, candidate, plane) while the
  // cache holds fewer than CACHE_CELLS cells (about 25 bytes each).
  const cache = new Map<string, Beams>();
  let cached = 0;
  let current: Int32Array = new Int32Array(0);
  const slot = new Int32Array(instruments.length).fill(-1);
  movableIdx.forEach((ii, k) => (slot[ii] = k));
  const source: BeamSource = (i, pos, gi) => {
    const key = `${i}:${slot[i] >= 0 ? current[slot[i]] : -1}:${gi}`;
    let b = cache.get(key);
    if (!b) {
      const full = beamCells(instruments[i], pos[i], geoms[gi], frame, s);
      b = { dir: full.dir, flags: full.flags };
      if (cached + b.flags.length <= CACHE_CELLS) {
        cache.set(key, b);
        cached += b.flags.length;
      }
    }
    return b;
  };
  const scored: LayoutScore[] = [];
  let skipped = 0;
  for (const combo of combos) {
    const positions = own.map((p) => [...p] as Vec3);
    const choice = instruments.map(() => -1);
    movableIdx.forEach((ii, k) => {
      positions[ii] = cand[k][combo[k]];
      choice[ii] = combo[k];
    });
    let coincident = false;
    for (let a = 0; a < positions.length && !coincident; a++)
      for (let b = a + 1; b < positions.length; b++)
        if (Math.hypot(positions[a][0] - positions[b][0], positions[a][1] - positions[b][1], positions[a][2] - positions[b][2]) < 1) {
          coincident = true;
          break;
        }
    if (coincident) {
      skipped++;
      continue;
    }
    current = combo;
    scored.push(scoreLayout(instruments, positions, geoms, frame, s, choice, source));
  }
  scored.sort(compareLayouts);
  const ranked = scored.slice(0, s.top);
  const best = ranked[0] ?? baseline;
  return {
    movable: movableIdx.map((i, k) => ({ instrumentId: instruments[i].id, candidates: cand[k].length })),
    baseline,
    ranked,
    total,
    evaluated: scored.length,
    skippedCoincident: skipped,
    sampled,
    seed: s.seed,
    gain: { rotorAll: best.rotor.all - baseline.rotor.all, planeAll: best.plane.all - baseline.plane.all },
  };
}
