/**
 * The accepted, in-plane samples of one averaging window, columnar and growable. The pipeline appends samples as it
 * reads them; the retrieval consumes a finished window. Memory is bounded by one window's in-plane samples, not by
 * the campaign.
 *
 * nx, ny, nz hold the beam unit vector in the rotor frame of the window (x downstream, y left, z up) after
 * calibration; vr is the radial velocity, m/s, positive away from the instrument. py, pz are the sample's position in
 * the plane (y and height for a cross plane, y and x for a horizontal one), metres: scanning instruments aim at fixed
 * points while the rotor frame turns with the wind, so samples do not sit at cell centres and the retrieval reports
 * where in each cell they were.
 */
export interface WindowSamples {
  length: number;
  plane: Uint16Array;
  cell: Uint32Array;
  instrument: Uint8Array;
  vr: Float64Array;
  nx: Float64Array;
  ny: Float64Array;
  nz: Float64Array;
  py: Float64Array;
  pz: Float64Array;
  /** Sample times, Unix s (optional): with them the uncertainty budget's sampling statistics are computed. */
  time?: Float64Array;
}

export function createWindowSamples(capacity = 4096): WindowSamples {
  return {
    length: 0,
    plane: new Uint16Array(capacity),
    cell: new Uint32Array(capacity),
    instrument: new Uint8Array(capacity),
    vr: new Float64Array(capacity),
    nx: new Float64Array(capacity),
    ny: new Float64Array(capacity),
    nz: new Float64Array(capacity),
    py: new Float64Array(capacity),
    pz: new Float64Array(capacity),
  };
}

function grow<T extends Uint16Array | Uint32Array | Uint8Array | Float64Array>(a: T, n: number): T {
  const b = new (a.constructor as new (n: number) => T)(n);
  b.set(a);
  return b;
}

export function pushSample(
  s: WindowSamples, plane: number, cell: number, instrument: number, vr: number, nx: number, ny: number, nz: number,
  py = NaN, pz = NaN,
): void {
  if (s.length === s.vr.length) {
    const n = s.vr.length * 2;
    s.plane = grow(s.plane, n); s.cell = grow(s.cell, n); s.instrument = grow(s.instrument, n);
    s.vr = grow(s.vr, n); s.nx = grow(s.nx, n); s.ny = grow(s.ny, n); s.nz = grow(s.nz, n);
    s.py = grow(s.py, n); s.pz = grow(s.pz, n);
  }
  const i = s.length++;
  s.plane[i] = plane; s.cell[i] = cell; s.instrument[i] = instrument;
  s.vr[i] = vr; s.nx[i] = nx; s.ny[i] = ny; s.nz[i] = nz;
  s.py[i] = py; s.pz[i] = pz;
}
