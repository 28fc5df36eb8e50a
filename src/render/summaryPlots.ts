/**
 * Summary plots over planes and windows: centreline deficit, wake widths and wake centre against downstream distance
 * with the fitted model curves, and the lateral wake-centre deflection against yaw offset with the published model
 * curves. Files go to <runDir>/images/summary_<what>.svg and .png.
 */
import type { Campaign } from '../campaign/types.ts';
import type { OutputRecord } from '../records/manifest.ts';
import type { Stat, WakeAnalysis } from '../wake/types.ts';
import { QUANTITY } from './labels.ts';
import { linePlotSvg, type PlotSeries } from './linePlot.ts';
import { writeFigure, type FigureOptions } from './figure.ts';
import { decimalsForUncertainty, fixed, qty, withUncertainty } from './numbers.ts';
import { LAW_NOTE, lawSpeed } from './planeImages.ts';
import { formatNumber } from './ticks.ts';
import { theme } from './theme.ts';
import { groupBy } from '../math/group.ts';

/** The top-hat k for a legend: the fit with its standard error, or the default with where it came from. */
function topHatK(t: WakeAnalysis['downstream']['topHat']): string {
  if (t.kSource === 'fit') return `${withUncertainty(t.kFit, t.kFitSE)} (fitted)`;
  if (t.kSource === 'option') return `${formatNumber(t.k, 3)} (given)`;
  return `${formatNumber(t.k, 3)} (0.4\u00a0I)`;
}

/** Half-length of an error bar for a Stat: the 95 % confidence half-width, else the standard deviation. */
function bar(s: Stat): number {
  return Number.isFinite(s.ci95) ? s.ci95 : s.sd;
}

export async function renderSummaryPlots(analysis: WakeAnalysis, campaign: Campaign, runDir: string, fig: FigureOptions = {}): Promise<OutputRecord[]> {
  const jobs = summaryFigures(analysis, campaign).map((f) => writeFigure(f.svg, runDir, `summary_${f.what}`, { description: f.description }, fig));
  return (await Promise.all(jobs)).flat();
}

/** The summary figures as SVG text (pure), for rendering or inspection. */
export function summaryFigures(a: WakeAnalysis, campaign: Campaign): { what: string; description: string; svg: string }[] {
  const D = a.rotorDiameter_m || campaign.turbine.rotorDiameter_m;
  const H = a.hubHeight_m || campaign.turbine.hubHeight_m;
  const pts = [...a.downstream.points].sort((p, q) => p.x_D - q.x_D);
  const figs: { what: string; description: string; svg: string }[] = [];
  const ds = a.downstream;
  const xD = pts.map((p) => p.x_D);
  const barNote = 'Error bars: 95\u00a0% confidence interval of the mean over windows (standard deviation where only one window).';

  if (pts.length) {
    const gf = ds.gaussianFit;
    const series: PlotSeries[] = [
      { label: 'measured, deficit at the wake centre', x: xD, y: pts.map((p) => p.centreDeficit.mean), yErr: pts.map((p) => bar(p.centreDeficit)), kind: 'points', marker: 'circle', colour: theme.series[0], xOffset: -0.06 },
      { label: 'measured, fitted Gaussian amplitude', x: xD, y: pts.map((p) => p.amplitude.mean), yErr: pts.map((p) => bar(p.amplitude)), kind: 'points', marker: 'square', colour: theme.series[2], xOffset: 0.06 },
      { label: `Gaussian model, fitted k^{*}\u00a0=\u00a0${withUncertainty(gf.kStar, gf.kStarSE)}, \u03b5\u00a0=\u00a0${withUncertainty(gf.eps, gf.epsSE)}`, x: ds.gaussianCurve.x_D, y: ds.gaussianCurve.deficit, kind: 'line', colour: theme.series[1] },
      { label: `top-hat model, k\u00a0=\u00a0${topHatK(ds.topHat)}`, x: ds.topHatCurve.x_D, y: ds.topHatCurve.deficit, kind: 'line', dash: '6 4', colour: theme.series[4] },
    ];
    figs.push({
      what: 'deficit',
      description: 'centreline deficit against downstream distance with model curves',
      svg: linePlotSvg({
        title: 'Wake deficit downstream',
        subtitle: `C_{T}\u00a0=\u00a0${formatNumber(gf.ct, 2)} (${gf.ctSource}) \u00b7 hub-height inflow ${qty(gf.hubSpeed_ms, 'm/s', 1)} \u00b7 ${gf.nPlanes}\u00a0plane${gf.nPlanes === 1 ? '' : 's'}`,
        xLabel: QUANTITY.downstream,
        yLabel: QUANTITY.deficit,
        series,
        yIncludeZero: true,
        notes: [
          barNote,
          'Gaussian model: Bastankhah & Port\u00e9-Agel (2014), Renewable Energy 70. Top-hat model: Jensen (1983); Kati\u0107, H\u00f8jstrup & Jensen (1986).',
          `Top-hat k: ${ds.topHat.kNote}; from the inflow it would be 0.4\u00a0I\u00a0=\u00a0${formatNumber(ds.topHat.kDefault, 3)} (Pe\u00f1a, R\u00e9thor\u00e9 & van der Laan 2016).`,
        ].filter(Boolean),
      }),
    });

    // The 95 % interval to the decimals of the standard error it comes from.
    const ci = (c: [number, number], se: number) => (Number.isFinite(c[0]) && se > 0 ? ` [95\u00a0%: ${fixed(c[0], decimalsForUncertainty(se))}, ${fixed(c[1], decimalsForUncertainty(se))}]` : '');
    figs.push({
      what: 'width',
      description: 'wake widths against downstream distance with the fitted linear growth',
      svg: linePlotSvg({
        title: 'Wake width downstream',
        subtitle: `\u03c3/D\u00a0=\u00a0k^{*}\u00a0x/D\u00a0+\u00a0\u03b5 fitted: k^{*}\u00a0=\u00a0${withUncertainty(gf.kStar, gf.kStarSE)}${ci(gf.kStarCI95, gf.kStarSE)}, \u03b5\u00a0=\u00a0${withUncertainty(gf.eps, gf.epsSE)}${ci(gf.epsCI95, gf.epsSE)} (\u03b5 from C_{T}: ${formatNumber(gf.epsTheory, 3)}); \u00b1 standard errors`,
        xLabel: QUANTITY.downstream,
        yLabel: 'width/D (\u2013)',
        series: [
          { label: '\u03c3_{y}/D (lateral)', x: xD, y: pts.map((p) => p.sigmaY_m.mean / D), yErr: pts.map((p) => bar(p.sigmaY_m) / D), kind: 'points', marker: 'triangle', colour: theme.series[0], xOffset: -0.1 },
          { label: '\u03c3_{z}/D (vertical)', x: xD, y: pts.map((p) => p.sigmaZ_m.mean / D), yErr: pts.map((p) => bar(p.sigmaZ_m) / D), kind: 'points', marker: 'diamond', colour: theme.series[2], xOffset: 0.1 },
          { label: '\u221a(\u03c3_{y}\u03c3_{z})/D', x: xD, y: pts.map((p) => p.sigma_D.mean), yErr: pts.map((p) => bar(p.sigma_D)), kind: 'points', marker: 'circle', colour: theme.series[3] },
          { label: 'linear fit of \u221a(\u03c3_{y}\u03c3_{z})/D', x: ds.gaussianCurve.x_D, y: ds.gaussianCurve.width_D, kind: 'line', colour: theme.series[1] },
        ],
        yIncludeZero: true,
        notes: [barNote, 'Points at the same distance are drawn slightly apart.', `Fit: ${gf.ok ? 'ok' : 'not usable'}${gf.note ? `, ${gf.note}` : ''}; RMSE ${formatNumber(gf.rmse, 4)}. Linear growth as in Bastankhah & Port\u00e9-Agel (2014).`],
      }),
    });

    figs.push({
      what: 'centre',
      description: 'wake centre against downstream distance',
      svg: linePlotSvg({
        title: 'Wake centre downstream',
        subtitle: 'Centre of the 2D Gaussian fit, relative to the hub, in rotor diameters',
        xLabel: QUANTITY.downstream,
        yLabel: 'centre offset/D (\u2013)',
        series: [
          { label: 'lateral y_{c}/D (+ left looking downstream)', x: xD, y: pts.map((p) => p.yc_m.mean / D), yErr: pts.map((p) => bar(p.yc_m) / D), kind: 'both', marker: 'circle', colour: theme.series[0] },
          { label: 'vertical (z_{c} \u2212 z_{hub})/D', x: xD, y: pts.map((p) => (p.zc_m.mean - H) / D), yErr: pts.map((p) => bar(p.zc_m) / D), kind: 'both', marker: 'square', colour: theme.series[2], dash: '5 3' },
        ],
        yIncludeZero: true,
        yReference: 0,
        notes: [barNote],
      }),
    });
  }

  // Inflow profiles: the plane with the most usable profiles, up to six windows, measured points and fitted laws.
  const withProfile = a.rows.filter((r) => r.inflow.ok && r.inflow.heights_m.length > 0);
  if (withProfile.length) {
    const byPlane = groupBy(withProfile, (r) => r.planeId);
    const [pid, rows] = [...byPlane].sort((p, q) => q[1].length - p[1].length)[0];
    const shown = rows.slice(0, 6);
    const series: PlotSeries[] = [];
    shown.forEach((r, k) => {
      const p = r.inflow;
      const colour = theme.series[k % theme.series.length];
      const zs: number[] = [], vs: number[] = [];
      const z0 = Math.max(1, Math.min(...p.heights_m) * 0.9), z1 = Math.max(...p.heights_m) * 1.05;
      for (let j = 0; j <= 40; j++) {
        const z = z0 + ((z1 - z0) * j) / 40;
        zs.push(z);
        vs.push(lawSpeed(p, z));
      }
      const law = p.law === 'power' ? `\u03b1\u00a0=\u00a0${formatNumber(p.alpha, 3)}` : `u_{*}\u00a0=\u00a0${qty(p.uStar_ms, 'm/s', 3)}, z_{0}\u00a0=\u00a0${qty(p.z0_m, 'm', 3)}`;
      series.push({ label: `window ${r.window.index}: ${qty(p.hubSpeed_ms, 'm/s', 1)} at hub, ${law}`, x: p.speeds_ms, y: p.heights_m, kind: 'points', colour, marker: (['circle', 'square', 'triangle', 'diamond'] as const)[k % 4] });
      series.push({ label: `window ${r.window.index}, fitted ${p.law} law`, x: vs, y: zs, kind: 'line', colour });
    });
    figs.push({
      what: 'inflow',
      description: 'inflow profiles and fitted laws',
      svg: linePlotSvg({
        title: 'Inflow profiles',
        subtitle: `${shown[0].inflow.source === 'plane' ? `from the undisturbed cells of plane ${pid}` : `from the ${shown[0].inflow.source} reference`} \u00b7 ${shown.length} of ${rows.length} windows shown`,
        xLabel: QUANTITY.speed,
        yLabel: QUANTITY.height,
        series,
        plotWidth: 400,
        plotHeight: 340,
        notes: [LAW_NOTE[shown[0].inflow.law]],
      }),
    });
  }

  const st = a.steering;
  if (st.bins.length) {
    const planes = [...new Set(st.bins.map((b) => b.planeId))];
    const series: PlotSeries[] = [];
    let anyAbsolute = false;
    planes.forEach((pid, k) => {
      const bins = st.bins.filter((b) => b.planeId === pid).sort((p, q) => p.gammaMean_deg - q.gammaMean_deg);
      const colour = theme.series[k % theme.series.length];
      const x_D = bins[0].x_D;
      // The models give the deflection caused by yaw: plot the centre relative to the plane's gamma = 0 bin when
      // there is one (so an offset present without yaw does not count as deflection), else the centre itself.
      const relative = bins.some((b) => Number.isFinite(b.deflection_m));
      anyAbsolute ||= !relative;
      series.push({
        label: `${pid} (x\u00a0=\u00a0${qty(x_D, 'D', 1)}), measured${relative ? '' : ' centre (no \u03b3\u00a0=\u00a00 bin)'}`,
        x: bins.map((b) => b.gammaMean_deg),
        y: bins.map((b) => (relative ? b.deflection_m : b.yc_m) / D),
        yErr: bins.map((b) => (relative ? b.deflectionCi95_m : Number.isFinite(b.ci95_m) ? b.ci95_m : b.sd_m) / D),
        kind: 'points', colour, marker: (['circle', 'square', 'triangle', 'diamond'] as const)[k % 4],
      });
      const c = st.curves.find((cv) => cv.planeId === pid);
      if (c) {
        series.push({ label: `${pid}, Bastankhah & Port\u00e9-Agel (2016)`, x: c.gamma_deg, y: c.bastankhah_m.map((v) => v / D), kind: 'line', colour });
        series.push({ label: `${pid}, Jim\u00e9nez et al. (2010)`, x: c.gamma_deg, y: c.jimenez_m.map((v) => v / D), kind: 'line', colour, dash: '2 3' });
      }
    });
    figs.push({
      what: 'steering',
      description: 'wake-centre deflection against yaw offset with published model curves',
      svg: linePlotSvg({
        title: 'Wake deflection against yaw offset',
        subtitle: `C_{T}\u00a0=\u00a0${formatNumber(st.ct, 2)} \u00b7 turbulence intensity ${formatNumber(st.turbulenceIntensity, 2)} \u00b7 yaw offset positive = nacelle turned clockwise seen from above`,
        xLabel: QUANTITY.yaw,
        yLabel: anyAbsolute ? 'y_{c}/D, lateral wake centre (+ left)' : '\u0394y_{c}/D, deflection (+ left)',
        series,
        yReference: 0,
        notes: [
          anyAbsolute
            ? 'Planes without a \u03b3\u00a0=\u00a00 bin show the bin-mean centre itself. Error bars: 95\u00a0% confidence interval of the bin mean.'
            : 'Deflection: bin-mean wake centre minus the mean centre of the \u03b3\u00a0=\u00a00 bin of the same plane. Error bars: 95\u00a0% confidence interval (both bins combined).',
          'Models: Jim\u00e9nez, Crespo & Migoya (2010), Wind Energy 13(6); Bastankhah & Port\u00e9-Agel (2016), J. Fluid Mech. 806.',
          st.note,
        ].filter(Boolean),
      }),
    });
  }
  return figs;
}
