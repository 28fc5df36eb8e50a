/**
 * Single-instrument wake tracking: one scanner sees only the line-of-sight component, so the wind is taken to blow
 * along an assumed direction D (the window's wind direction, horizontal, d = -(sin D, cos D, 0)). Per bin, the
 * apparent streamwise speed is S_app = mean(v_r) / (mean(n) . d); the deficit is 1 - S_app / S_inf(z), with S_inf the
 * campaign's inflow reference at the bin's height when it has one (a profiler, a fixed profile), else from the outer
 * fifth of the bins on each side of the sector (at least two each; assumed outside the wake): their mean apparent
 * speed across a horizontal sector, a power law in height through them across a vertical one (edgePowerLaw: the
 * bottom and top of a vertical sector differ by the shear). Bins whose beam makes more than maxBeamAngle_deg with d
 * are masked: the projection n . d becomes small and divides the noise up.
 *
 * Bias of the direction assumption: if the flow comes from D + delta, a beam at angle beta from d sees
 * S cos(beta - delta) instead of S cos(beta), so S_app = S (cos delta + tan beta sin delta): across a sector tan beta
 * varies, which tilts the deficit profile and moves its centre. The analysis is repeated with D +/- delta (delta =
 * track.directionUncertainty_deg; the bins kept, only the projection changed) and the largest change of the fitted
 * centre and width is reported as the direction bias.
 *
 * Per downstream bin: a 1D Gaussian across the wake (wake/gaussian1d.ts; at least 5 bins) and the deficit-weighted
 * centroid of the bins above half the peak (NaN when the first or last bin with data is itself above half the peak:
 * the sweep cuts the region and the centroid would lean away from the cut). With at least MIN_BINS_BASELINE bins the
 * Gaussian carries a constant baseline b: a free stream S_ref that is off by a share e (outer bins still in the
 * wake, an inflow reference from elsewhere) turns the true deficit d into d' = 1 - (1 - d) / (1 - e) =
 * (d - e) / (1 - e): the same Gaussian, scaled, on a baseline b = -e / (1 - e). So the centre and width are those of
 * the fit, the deficit against the free stream S_ref (1 - b) is (d' - b) / (1 - b), the amplitude A / (1 - b), and
 * the free stream reported is S_ref (1 - b). Without the baseline a sector only 2.5 widths wide read the wake 6-15 %
 * too narrow (test/geometries-heldback.test.ts). Flags (first that applies): no_free_stream, too_few_bins, no_wake
 * (peak below minDeficit), not_converged, off_edge.
 */
import type { CellStats } from '../retrieval/cellStats.ts';
import { fitGaussian1D, fitGaussian1DOffset, type Gaussian1DFit } from '../wake/gaussian1d.ts';
import type { TrackerLayout } from './target.ts';
import type { TrackFlag, TrackPoint } from './types.ts';

export interface TrackSolveContext {
  window: TrackPoint['window'];
  /** Assumed flow direction (from), degrees. */
  direction_deg: number;
  rotorDiameter_m: number;
  /** Free-stream speed at a height from the campaign's inflow reference (undefined: estimate from the sector). */
  freeStreamAt?: (z_m: number) => number;
  freeStreamSource?: string;
  /** Smallest peak deficit that counts as a wake. @default 0.05 */
  minDeficit?: number;
  /** Minimum kept samples in a bin. @default 3 */
  minSamples?: number;
}

interface Bin { c: number; vr: number; n: number; a: [number, number, number]; z: number; sdv: number }

/**
 * Free stream of a vertical sector from its outer bins: the power law S(z) = S_h (z / z_h)^alpha fitted through
 * ln S_app against ln z of the outer bins below and above the wake (ordinary least squares), so that the shear
 * between the bottom and the top of the sector is not read as a deficit. Null when a speed or height is not
 * positive (the mean is used then).
 */
function edgePowerLaw(z: number[], s: number[]): { at: (z: number) => number; alpha: number } | null {
  if (z.some((v) => !(v > 0)) || s.some((v) => !(v > 0))) return null;
  const X = z.map(Math.log), Y = s.map(Math.log), n = X.length;
  const mx = X.reduce((a, b) => a + b, 0) / n, my = Y.reduce((a, b) => a + b, 0) / n;
  let sxx = 0, sxy = 0;
  for (let i = 0; i < n; i++) { sxx += (X[i] - mx) ** 2; sxy += (X[i] - mx) * (Y[i] - my); }
  if (!(sxx > 0)) return null;
  const alpha = sxy / sxx;
  return { at: (h) => Math.exp(my + alpha * (Math.log(h) - mx)), alpha };
}

function analyseRow(bins: Bin[], dir_deg: number, maxAngle_deg: number, ctx: TrackSolveContext, vertical: boolean) {
  const D = (dir_deg * Math.PI) / 180, dE = -Math.sin(D), dN = -Math.cos(D);
  const cosMax = Math.cos((maxAngle_deg * Math.PI) / 180);
  const use = bins.filter((b) => {
    const len = Math.hypot(...b.a);
    return Math.abs(b.a[0] * dE + b.a[1] * dN) / len >= cosMax;
  });
  const app = use.map((b) => b.vr / (b.a[0] * dE + b.a[1] * dN));
  const sapp = use.map((b) => b.sdv / Math.sqrt(b.n) / Math.abs(b.a[0] * dE + b.a[1] * dN));
  let sInf: number[];
  let source: string;
  if (ctx.freeStreamAt) {
    sInf = use.map((b) => ctx.freeStreamAt!(b.z));
    source = ctx.freeStreamSource ?? 'inflow reference';
  } else {
    const k = Math.max(2, Math.floor(use.length / 5));
    if (use.length < 2 * k + 1) return null;
    const edge = [...app.slice(0, k), ...app.slice(app.length - k)];
    const m = edge.reduce((s, v) => s + v, 0) / edge.length;
    sInf = use.map(() => m);
    source = `outer ${k} bins on each side`;
    if (vertical) {
      const law = edgePowerLaw([...use.slice(0, k), ...use.slice(use.length - k)].map((b) => b.z), edge);
      if (law) {
        sInf = use.map((b) => law.at(b.z));
        source = `power law (alpha ${law.alpha.toFixed(3)}) through the outer ${k} bins below and above`;
      }
    }
  }
  const c = use.map((b) => b.c);
  const d = app.map((s, i) => 1 - s / sInf[i]);
  const sd = sapp.map((s, i) => s / sInf[i]);
  return { c, d, sd, sInf: sInf.length ? sInf.reduce((s, v) => s + v, 0) / sInf.length : NaN, source, samples: use.reduce((s, b) => s + b.n, 0) };
}

/** Fewest across-wake bins for the fit with a baseline (four parameters and three degrees of freedom). */
export const MIN_BINS_BASELINE = 7;

/**
 * The Gaussian across one row, with a baseline when there are enough bins and that fit converges (else without);
 * the fit's amplitude is returned as the deficit against the corrected free stream, A / (1 - b).
 */
function fitRow(c: number[], d: number[], lo: number, hi: number, step: number, minDef: number) {
  const ok = c.map((_, i) => i).filter((i) => Number.isFinite(d[i]));
  const cc = ok.map((i) => c[i]), dd = ok.map((i) => d[i]);
  if (cc.length < 5) return { flag: 'too_few_bins' as TrackFlag, reason: `${cc.length} usable bins < 5`, fit: null, centroid: NaN };
  const peak = Math.max(...dd);
  if (!(peak >= minDef)) return { flag: 'no_wake' as TrackFlag, reason: `peak deficit ${peak.toFixed(3)} < ${minDef}`, fit: null, centroid: NaN };
  let fit: Gaussian1DFit = fitGaussian1D(cc, dd);
  if (cc.length >= MIN_BINS_BASELINE && fit.converged && fit.width > 0) {
    const f4 = fitGaussian1DOffset(cc, dd, [fit.amplitude, fit.centre, fit.width, 0]);
    if (f4.converged && f4.width > 0 && f4.offset < 0.5 && f4.stderr.every(Number.isFinite)) {
      const k = 1 / (1 - f4.offset);
      fit = { ...f4, amplitude: f4.amplitude * k, stderr: [f4.stderr[0] * k, f4.stderr[1], f4.stderr[2], f4.stderr[3]] };
    }
  }
  const b = fit.offset, base = (v: number) => (v - b) / (1 - b);
  const top = base(peak);
  let sw = 0, swc = 0;
  dd.forEach((v, i) => { const x = base(v); if (x >= top / 2) { sw += x; swc += x * cc[i]; } });
  // The centroid is shape-independent only when the half-peak region lies inside the data: a first or last bin
  // still above half the peak means the sweep cut it (a yawed nacelle's sweep, a narrow sector), and the centroid
  // would lean away from the cut. It is left out then.
  const cut = base(dd[0]) >= top / 2 || base(dd[dd.length - 1]) >= top / 2;
  const centroid = cut ? NaN : swc / sw;
  if (!fit.converged || !(fit.width > 0) || !Number.isFinite(fit.centre)) return { flag: 'not_converged' as TrackFlag, reason: 'Gaussian fit did not converge', fit, centroid };
  if (!(fit.centre > lo + step && fit.centre < hi - step)) return { flag: 'off_edge' as TrackFlag, reason: `centre ${fit.centre.toFixed(1)} m outside or within one bin of the edge`, fit, centroid };
  if (!(fit.amplitude >= minDef)) return { flag: 'no_wake' as TrackFlag, reason: `fitted amplitude ${fit.amplitude.toFixed(3)} < ${minDef}`, fit, centroid };
  return { flag: 'ok' as TrackFlag, reason: '', fit, centroid };
}

/** Per scan (scan >= 0) and for the whole window (scan -1), per downstream bin. */
export function solveTrack(st: CellStats, layout: TrackerLayout, ctx: TrackSolveContext): TrackPoint[] {
  const ins = layout.instrument, tr = ins.track!;
  const I = st.instrumentCount, nx = layout.x.length, na = layout.across.length;
  const minN = ctx.minSamples ?? 3, minDef = ctx.minDeficit ?? 0.05;
  const delta = tr.directionUncertainty_deg;
  const lo = layout.across[0], hi = layout.across[na - 1], step = tr.across_m.step;
  const out: TrackPoint[] = [];
  const scanList = layout.scans > 1 ? [-1, ...Array.from({ length: layout.scans }, (_, s) => s)] : [-1];
  for (const scan of scanList) {
    for (let ix = 0; ix < nx; ix++) {
      const bins: Bin[] = [];
      for (let ia = 0; ia < na; ia++) {
        let n = 0, sv = 0, sv2 = 0, sx = 0, sy = 0, sz = 0, spy = 0, spz = 0;
        const s0 = scan < 0 ? 0 : scan, s1 = scan < 0 ? layout.scans : scan + 1;
        for (let s = s0; s < s1; s++) {
          const key = (layout.offset + s * nx * na + ix * na + ia) * I + ins.index;
          if (!st.n[key]) continue;
          n += st.n[key]; sv += st.sv[key]; sv2 += st.sv2[key]; sx += st.sx[key]; sy += st.sy[key]; sz += st.sz[key]; spy += st.spy[key]; spz += st.spz[key];
        }
        if (n < minN) continue;
        const m = sv / n;
        const sdv = Math.max(0.01, Math.sqrt(Math.max(0, sv2 - sv * m) / Math.max(1, n - 1)));
        bins.push({ c: spy / n, vr: m, n, a: [sx / n, sy / n, sz / n], z: spz / n, sdv });
      }
      const x = layout.x[ix];
      const base: TrackPoint = {
        instrumentId: ins.id, window: ctx.window, scan, x_m: x, x_D: x / ctx.rotorDiameter_m, axis: tr.sector === 'horizontal' ? 'y' : 'z',
        freeStream_ms: NaN, freeStreamSource: '', amplitude: NaN, centre_m: NaN, scentre_m: NaN, width_m: NaN, swidth_m: NaN, centroid_m: NaN,
        r2: NaN, bins: bins.length, samples: bins.reduce((s, b) => s + b.n, 0), directionBiasCentre_m: NaN, directionBiasWidth_m: NaN,
        flag: 'ok', reason: '', profile: { c_m: [], deficit: [], sdeficit: [] },
      };
      const row = analyseRow(bins, ctx.direction_deg, tr.maxBeamAngle_deg, ctx, tr.sector === 'vertical');
      if (!row) { out.push({ ...base, flag: bins.length < 5 ? 'too_few_bins' : 'no_free_stream', reason: bins.length < 5 ? `${bins.length} bins with data < 5` : 'too few bins to estimate the free stream from the sector edges' }); continue; }
      const res = fitRow(row.c, row.d, lo, hi, step, minDef);
      // The baseline of the fit corrects the free stream and the deficit profile (see the docblock).
      const b = res.fit ? res.fit.offset : 0;
      const p: TrackPoint = {
        ...base, freeStream_ms: row.sInf * (1 - b), freeStreamSource: b !== 0 ? `${row.source}, corrected by the fitted baseline (${(-100 * b).toFixed(1)} %)` : row.source,
        flag: res.flag, reason: res.reason, centroid_m: res.centroid,
        profile: { c_m: row.c, deficit: row.d.map((v) => (v - b) / (1 - b)), sdeficit: row.sd.map((v) => v / (1 - b)) },
      };
      if (res.fit) {
        p.amplitude = res.fit.amplitude; p.centre_m = res.fit.centre; p.width_m = res.fit.width;
        p.scentre_m = res.fit.stderr[1]; p.swidth_m = res.fit.stderr[2]; p.r2 = res.fit.r2;
      }
      if (res.flag === 'ok' && delta > 0) {
        let bc = 0, bw = 0;
        for (const sgn of [-1, 1]) {
          const alt = analyseRow(bins, ctx.direction_deg + sgn * delta, tr.maxBeamAngle_deg, ctx, tr.sector === 'vertical');
          const f = alt ? fitRow(alt.c, alt.d, lo, hi, step, minDef) : null;
          if (!f?.fit || f.flag !== 'ok') { bc = NaN; bw = NaN; break; }
          bc = Math.max(bc, Math.abs(f.fit.centre - p.centre_m));
          bw = Math.max(bw, Math.abs(f.fit.width - p.width_m));
        }
        p.directionBiasCentre_m = bc; p.directionBiasWidth_m = bw;
      }
      out.push(p);
    }
  }
  return out;
}
