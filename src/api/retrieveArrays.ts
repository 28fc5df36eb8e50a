/**
 * One window retrieved from plain arrays: the library's stable entry to the retrieval, whatever the pipeline's
 * internal sample containers are. Each sample: its plane and cell, the instrument index, the radial velocity (m/s,
 * positive away from the instrument), the beam unit vector in the window's rotor frame (x downstream, y left, z up),
 * and optionally its position in the plane (y and height, or y and x on a horizontal plane, metres).
 */
import type { Campaign } from '../campaign/types.ts';
import { gridSpecOf } from '../grid/grid.ts';
import { createWindowSamples, pushSample } from '../grid/windowSamples.ts';
import { retrieveWindow } from '../retrieval/retrieveWindow.ts';
import type { PlaneGrid, RetrievalSettings } from '../retrieval/settings.ts';
import type { FieldResult, WindowInfo } from '../retrieval/types.ts';

export interface SampleArraysInput {
  plane: ArrayLike<number>;
  cell: ArrayLike<number>;
  instrument: ArrayLike<number>;
  radialVelocity: ArrayLike<number>;
  beamX: ArrayLike<number>;
  beamY: ArrayLike<number>;
  beamZ: ArrayLike<number>;
  positionY?: ArrayLike<number>;
  positionZ?: ArrayLike<number>;
}

export interface RetrieveArraysResult {
  fields: FieldResult[];
  /** Samples rejected by the robust filter, per instrument. */
  outliers: number[];
}

/** The campaign's planes as retrieval grids and its retrieval settings (what `run` uses). */
export function retrievalSetup(c: Campaign): { planes: PlaneGrid[]; settings: RetrievalSettings } {
  return {
    planes: c.planes.map((spec) => ({ spec, grid: gridSpecOf(spec) })),
    settings: {
      maxAmplification: c.retrieval.maxAmplification,
      minSamplesPerInstrument: c.retrieval.minSamplesPerInstrument,
      twoInstrumentAssumption: c.retrieval.twoInstrumentAssumption,
      robust: c.qc.robust,
      instrumentCount: c.instruments.length,
    },
  };
}

/**
 * Retrieves u, v, w with uncertainties and masks in every cell of every plane for one window of samples.
 * @param window index and [start, end) in Unix seconds (labels the fields)
 * @param direction_deg wind direction (from) that defined the rotor frame of the beam vectors, degrees
 */
export function retrieveFromArrays(c: Campaign, s: SampleArraysInput, window: WindowInfo, direction_deg: number): RetrieveArraysResult {
  const { planes, settings } = retrievalSetup(c);
  const n = s.radialVelocity.length;
  const w = createWindowSamples(Math.max(16, n));
  for (let i = 0; i < n; i++) {
    pushSample(w, s.plane[i], s.cell[i], s.instrument[i], s.radialVelocity[i], s.beamX[i], s.beamY[i], s.beamZ[i], s.positionY?.[i] ?? NaN, s.positionZ?.[i] ?? NaN);
  }
  const r = retrieveWindow(w, planes, window, direction_deg, settings);
  return { fields: r.fields, outliers: Array.from(r.outliers) };
}
