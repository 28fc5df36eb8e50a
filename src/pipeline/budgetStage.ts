/**
 * The uncertainty budget's run-level outputs: the summary in the manifest (manifest.uncertainty), a report section,
 * and figures (with images): per plane a bar chart of the budget terms per component at one chosen cell, maps of
 * the combined standard uncertainty of u, v and w (root-mean-square over the windows) on one colour range shared by
 * all planes, and a map of the turbulence intensity of u (mean over the windows, one range for all planes).
 *
 * The chosen cell of a plane: on a cross plane the cell holding hub height on the rotor axis (y = 0, z = the hub
 * height of the plane's turbine), the place a wake deficit is usually quoted; on a horizontal plane the cell on the
 * rotor axis in the middle of the plane's downstream extent. When it has no retrieved value in any window, the
 * retrieved cell nearest to it. Values are root-mean-squares over the windows (condition bins are left out: their
 * budget is that of their pooled windows).
 */
import { turbineOfPlane } from '../campaign/turbines.ts';
import { cellCentre, cellIndex } from '../grid/grid.ts';
import type { OutputRecord, UncertaintySummary } from '../records/manifest.ts';
import type { ReportSection } from '../render/report.ts';
import { BUDGET_TERMS, COMPONENTS } from '../retrieval/budget.ts';
import type { FieldResult } from '../retrieval/types.ts';
import type { RunStage } from './run.ts';

const TERMS = [...BUDGET_TERMS, 'combined'] as const;
const NT = TERMS.length;

/** What the budget leaves out; the README's Uncertainty section says the same. */
export const NOT_COVERED = [
  'calibration of the radial-velocity scale and range',
  'systematic errors of the wind direction defining the rotor frame unless declared (windDirection.uncertainty_deg; otherwise only the scatter of the direction series within a window is in the budget)',
  'the gradient across the plane (one plane cannot give it)',
  'flow that changes within a window other than by a linear trend',
  'bias of the w = 0 assumption in two-instrument cells',
  'correlation between passes closer than a few integral time scales',
];

interface PlaneAcc {
  plane: string;
  cells: number;
  /** Per component and term: sum of squares and count over all cells and windows. */
  all: Float64Array;
  allN: Float64Array;
  /** Per component, term and cell: sum of squares and count (for the chosen cell and the maps). */
  cell: Float64Array;
  cellN: Float64Array;
  /** Per cell: sum and count of the turbulence intensity of u. */
  ti: Float64Array;
  tiN: Float64Array;
  field: FieldResult;
}

function accumulate(acc: PlaneAcc, f: FieldResult): void {
  const b = f.budget!;
  const nc = acc.cells;
  COMPONENTS.forEach((k, ci) => {
    TERMS.forEach((t, ti) => {
      const a = t === 'combined' ? b.combined[k] : b.terms[k][t];
      const o = ci * NT + ti;
      for (let c = 0; c < nc; c++) {
        const v = a[c];
        if (!Number.isFinite(v)) continue;
        acc.all[o] += v * v; acc.allN[o]++;
        acc.cell[o * nc + c] += v * v; acc.cellN[o * nc + c]++;
      }
    });
  });
  const ti = b.turbulence.tiU;
  for (let c = 0; c < nc; c++) if (Number.isFinite(ti[c])) { acc.ti[c] += ti[c]; acc.tiN[c]++; }
}

const rms = (s: number, n: number) => (n > 0 ? Math.sqrt(s / n) : NaN);

export function budgetStage(): RunStage {
  const planes = new Map<string, PlaneAcc>();
  return {
    name: 'uncertainty budget',
    async field(f) {
      if (!f.budget || f.window.kind === 'ensemble') return [];
      let acc = planes.get(f.planeId);
      const nc = f.grid.ny * f.grid.nz;
      if (!acc) {
        acc = { plane: f.planeId, cells: nc, all: new Float64Array(3 * NT), allN: new Float64Array(3 * NT), cell: new Float64Array(3 * NT * nc), cellN: new Float64Array(3 * NT * nc), ti: new Float64Array(nc), tiN: new Float64Array(nc), field: f };
        planes.set(f.planeId, acc);
      }
      accumulate(acc, f);
      return [];
    },
    async finish(ctx) {
      if (!planes.size) return [];
      const c = ctx.campaign;
      const summary: UncertaintySummary = { terms: [...TERMS], planes: [], notCovered: NOT_COVERED };
      const maps: { acc: PlaneAcc; values: Float64Array[]; chosen: number }[] = [];
      for (const acc of planes.values()) {
        const f = acc.field, spec = c.planes[f.planeIndex], nc = acc.cells;
        const cross = f.orientation === 'cross';
        const want: [number, number] = cross ? [0, turbineOfPlane(c, spec).hubHeight_m] : [0, (spec.second.min + spec.second.max) / 2];
        const combinedU = (0 * NT + NT - 1) * nc;
        let chosen = cellIndex(f.grid, want[0], want[1]);
        if (chosen < 0 || acc.cellN[combinedU + chosen] === 0) {
          let best = Infinity;
          chosen = -1;
          for (let k = 0; k < nc; k++) {
            if (acc.cellN[combinedU + k] === 0) continue;
            const [y, z] = cellCentre(f.grid, k);
            const d = Math.hypot(y - want[0], z - want[1]);
            if (d < best) { best = d; chosen = k; }
          }
        }
        const comp = (at: (ci: number, ti: number) => [number, number]) => Object.fromEntries(COMPONENTS.map((k, ci) => {
          const rec: Record<string, number> = {};
          let values = 0;
          TERMS.forEach((t, ti) => { const [s, n] = at(ci, ti); rec[t] = rms(s, n); values = Math.max(values, n); });
          return [k, { ...rec, values }];
        })) as Record<string, Record<string, number> & { values: number }>;
        const [cy, cz] = chosen >= 0 ? cellCentre(f.grid, chosen) : [NaN, NaN];
        summary.planes.push({
          plane: acc.plane,
          allCells: comp((ci, ti) => [acc.all[ci * NT + ti], acc.allN[ci * NT + ti]]),
          chosenCell: {
            y_m: cy, second_m: cz, second_axis: cross ? 'z' : 'x',
            how: cross ? 'the cell at hub height on the rotor axis (y = 0), or the retrieved cell nearest to it' : 'the cell on the rotor axis in the middle of the plane, or the retrieved cell nearest to it',
            components: comp((ci, ti) => chosen < 0 ? [0, 0] : [acc.cell[(ci * NT + ti) * nc + chosen], acc.cellN[(ci * NT + ti) * nc + chosen]]),
          },
        });
        maps.push({
          acc, chosen,
          values: COMPONENTS.map((_, ci) => Float64Array.from({ length: nc }, (_, k) => rms(acc.cell[(ci * NT + NT - 1) * nc + k], acc.cellN[(ci * NT + NT - 1) * nc + k]))),
        });
      }
      ctx.manifest.uncertainty = summary;
      ctx.shared.uncertaintyReport = reportSection(summary);
      if (!ctx.images) return [];
      const { budgetBarsSvg, uncertaintyMapSvg } = await import('../render/budgetFigures.ts');
      const { writeFigure } = await import('../render/figure.ts');
      const { ValueHistogram } = await import('../render/runScales.ts');
      const { niceExtent } = await import('../render/ticks.ts');
      // One colour range for every map of the run: 0 to the 99th percentile of all mapped values, rounded.
      const h = new ValueHistogram(0, 10, 10000);
      for (const m of maps) for (const v of m.values) h.addAll(v);
      const domain: [number, number] = [0, niceExtent(0, Math.max(1e-3, h.quantile(0.99)))[1]];
      const tiMaps = maps.map((m) => Float64Array.from(m.acc.ti, (s, k) => (m.acc.tiN[k] > 0 ? s / m.acc.tiN[k] : NaN)));
      const hTi = new ValueHistogram(0, 2, 20000);
      for (const v of tiMaps) hTi.addAll(v);
      const tiDomain: [number, number] = [0, niceExtent(0, Math.max(1e-3, hTi.quantile(0.99)))[1]];
      const out: OutputRecord[] = [];
      const D = c.turbine.rotorDiameter_m;
      for (const [mi, m] of maps.entries()) {
        const p = summary.planes.find((x) => x.plane === m.acc.plane)!;
        const f = m.acc.field;
        const cross = f.orientation === 'cross';
        const where = `y = ${p.chosenCell.y_m.toFixed(0)} m, ${cross ? 'z' : 'x'} = ${p.chosenCell.second_m.toFixed(0)} m`;
        const values = Object.fromEntries(COMPONENTS.map((k) => [k, p.chosenCell.components[k]]));
        if (m.chosen >= 0) {
          out.push(...await writeFigure(
            budgetBarsSvg(`Uncertainty budget, plane ${m.acc.plane}`, `${where} (${p.chosenCell.how}); root-mean-square over ${p.chosenCell.components.u.values} windows`, [...TERMS], [...COMPONENTS], values),
            ctx.runDir, `uncertainty_budget_${m.acc.plane}`, { plane: m.acc.plane, description: `uncertainty budget per term and component at ${where}, plane ${m.acc.plane}` },
          ));
        }
        for (let ci = 0; ci < 3; ci++) {
          if (!m.values[ci].some(Number.isFinite)) continue;
          const k = COMPONENTS[ci];
          out.push(...await writeFigure(
            uncertaintyMapSvg(f.grid, m.values[ci], {
              title: `Combined standard uncertainty of ${k}, plane ${m.acc.plane}`, subtitle: 'root-mean-square over the windows',
              component: k, domain, secondLabel: cross ? 'z (m)' : 'x (m)', diameter_m: D,
              ...(cross ? { rotor: { y: 0, z: turbineOfPlane(c, c.planes[f.planeIndex]).hubHeight_m, radius: D / 2 } } : {}),
            }),
            ctx.runDir, `uncertainty_${k}_${m.acc.plane}`, { plane: m.acc.plane, description: `map of the combined standard uncertainty of ${k}, plane ${m.acc.plane}` },
          ));
        }
        if (tiMaps[mi].some(Number.isFinite)) {
          out.push(...await writeFigure(
            uncertaintyMapSvg(f.grid, tiMaps[mi], {
              title: `Turbulence intensity of u, plane ${m.acc.plane}`, subtitle: 'sqrt(var u) / |u| from the crossed-beam variance equations, mean over the windows; probe-volume filtered',
              component: 'u', domain: tiDomain, secondLabel: cross ? 'z (m)' : 'x (m)', diameter_m: D, colorbarLabel: 'I_{u} (–)',
              ...(cross ? { rotor: { y: 0, z: turbineOfPlane(c, c.planes[f.planeIndex]).hubHeight_m, radius: D / 2 } } : {}),
            }),
            ctx.runDir, `turbulence_intensity_${m.acc.plane}`, { plane: m.acc.plane, description: `map of the turbulence intensity of u (mean over the windows), plane ${m.acc.plane}` },
          ));
        }
      }
      return out;
    },
  };
}

/** The report's section: per plane the budget at the chosen cell and over all cells. */
function reportSection(s: UncertaintySummary): ReportSection {
  return {
    title: 'Uncertainty budget',
    items: [['Combined', 'root-sum-square of independent standard uncertainties with the retrieval\u2019s sensitivities (JCGM 100:2008)'], ['Not covered', s.notCovered.join('; ')]],
    tables: s.planes.flatMap((p) => [
      {
        title: `Plane ${p.plane}: at y = ${p.chosenCell.y_m.toFixed(0)} m, ${p.chosenCell.second_axis ?? 'second axis'} = ${p.chosenCell.second_m.toFixed(0)} m (${p.chosenCell.how}), m/s`,
        columns: ['component', ...s.terms],
        rows: COMPONENTS.map((k) => [k, ...s.terms.map((t) => p.chosenCell.components[k][t])]),
        link: 'manifest.json',
      },
      {
        title: `Plane ${p.plane}: root-mean-square over every retrieved cell and window, m/s`,
        columns: ['component', ...s.terms],
        rows: COMPONENTS.map((k) => [k, ...s.terms.map((t) => p.allCells[k][t])]),
      },
    ]),
    notes: ['Each term and the combined uncertainty per cell are in the field tables (columns u_unc_<term>_ms and u_unc_combined_ms, likewise v and w).'],
  };
}
