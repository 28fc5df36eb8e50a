/**
 * The power-gain stage (after the wake analysis): reads every turbine's series, takes the windows of the run (the
 * plan's, or those that received samples) with their state, direction and measured inflow and wake centres, runs
 * power/analyse.ts, and writes power/power_gain.csv, power/window_power.csv and (with images) the figure. Runs when
 * the campaign has a `power` section, or when two or more turbines have series with power.
 */
import { join } from 'node:path';
import { powerSchema } from '../campaign/schema.ts';
import { stateTurbine } from '../campaign/turbines.ts';
import { ConfigError, InputError } from '../errors.ts';
import { frameAxes } from '../geometry/site.ts';
import { writeFileAtomic } from '../io/atomic.ts';
import { readSeries, type Series } from '../io/series.ts';
import { analysePower, meanRowYawOffset, type PowerAnalysis, type PowerWindow } from '../power/analyse.ts';
import { powerGainCsv, windowPowerCsv } from '../power/output.ts';
import { windowYaw } from '../wake/yawOffset.ts';
import type { WakeAnalysis } from '../wake/types.ts';
import { directionAt, directionForWindow } from '../windows/direction.ts';
import { medianInterval } from '../windows/segments.ts';
import type { WindowPlan } from '../windows/plan.ts';
import type { RunStage } from './run.ts';

const COLUMNS = ['power_kw', 'status', 'wind_speed_ms', 'yaw_deg', 'wind_direction_deg'];

export function powerStage(): RunStage {
  return {
    name: 'power gain',
    async finish(ctx) {
      const c = ctx.campaign;
      const withSeries = c.turbines.filter((t) => t.series);
      if (!c.power && withSeries.length < 2) return [];
      if (withSeries.length < 2) throw new ConfigError(c.sourceFile, 'power', 'the power gain needs the series of at least two turbines (turbines[].series with power_kw)');
      const s = powerSchema.parse(c.power ?? {});
      const series = new Map<string, Series>();
      for (const t of withSeries) {
        const ser = readSeries(t.series!.file, t.series!.columns, [], COLUMNS);
        if (ser.time.length > 0 && ser.values.power_kw.every((v) => Number.isNaN(v))) {
          if (!c.power) continue; // series without power: no power question to answer
          throw new InputError(ser.file, 1, `no "${t.series!.columns.power_kw ?? 'power_kw'}" column with values: the power gain needs each turbine's power`);
        }
        series.set(t.id, ser);
      }
      if (series.size < 2) return [];
      const dirSeries = c.windDirection.kind === 'series' ? readSeries(c.windDirection.file, c.windDirection.columns, ['direction_deg'], [], { holes: ['direction_deg'] }) : undefined;
      const plan = ctx.shared.windowPlan as WindowPlan | undefined;
      const defs = plan?.all && plan.kind !== 'record'
        ? plan.all.map((d) => ({ id: d.id, start_s: d.start_s, end_s: d.end_s, level: d.level }))
        : ctx.manifest.windows.map((w) => ({ id: w.index, start_s: w.start_s, end_s: w.end_s, level: w.level_deg ?? NaN }));
      const wake = ctx.shared.wake as WakeAnalysis | undefined;
      // A row's wind direction: the nearest direction row within the direction series' own interval (at least 60 s).
      const reach = Math.max(60, dirSeries ? medianInterval(dirSeries) : 0);
      const rowDirection = (t: number) => directionAt(c, dirSeries, t, reach);
      const state = stateTurbine(c);
      const stateSeries = series.get(state.id);
      const windows: PowerWindow[] = defs.map((d) => {
        const direction = directionForWindow(c, dirSeries, d.start_s, d.end_s);
        const rows = wake?.rows.filter((r) => r.window.start_s === d.start_s && r.window.end_s === d.end_s) ?? [];
        const speeds = rows.filter((r) => r.turbineId === undefined || !(r.wakedBy?.length)).map((r) => r.inflow.hubSpeed_ms).filter(Number.isFinite);
        const centreAt: Record<string, number> = {};
        for (const r of rows) for (const a of r.centreAtTurbines ?? []) if (Number.isFinite(a.yc_m) && !(a.turbineId in centreAt)) centreAt[a.turbineId] = a.yc_m;
        return {
          id: d.id, start_s: d.start_s, end_s: d.end_s, direction_deg: direction, level_deg: d.level,
          yawOffset_deg: stateSeries ? windowYaw(stateSeries, d.start_s, d.end_s, direction).yawOffset_deg : NaN,
          // Each row against the wind direction at its own time (as segment windows pair them): the nacelle follows
          // the wind, the offset should not.
          yawThirds_deg: stateSeries && Number.isFinite(d.end_s - d.start_s)
            ? [0, 1, 2].map((k) => meanRowYawOffset(stateSeries, d.start_s + (k * (d.end_s - d.start_s)) / 3, d.start_s + ((k + 1) * (d.end_s - d.start_s)) / 3, rowDirection))
            : undefined,
          inflowSpeed_ms: speeds.length ? speeds.reduce((x, y) => x + y, 0) / speeds.length : NaN,
          centreAt,
        };
      });
      const ids = [...series.keys()];
      const reference = s.reference ?? mostUpstream(c.turbines.filter((t) => series.has(t.id)), windows);
      if (!series.has(reference)) throw new ConfigError(c.sourceFile, 'power.reference', 'the reference turbine has no series with power', reference);
      const downstream = (s.turbines ?? ids.filter((id) => id !== reference)).filter((id) => {
        if (!series.has(id)) throw new ConfigError(c.sourceFile, 'power.turbines', 'this turbine has no series with power', id);
        return id !== reference;
      });
      const a = analysePower(windows, ids.map((id) => ({ id, series: series.get(id)! })), reference, downstream, {
        ...s, directionEdges_deg: s.directionEdges_deg, speedEdges_ms: s.speedEdges_ms, levelStep_deg: c.wake.yawBin_deg,
      });
      ctx.shared.power = a;
      ctx.manifest.assumptions.push(...a.assumptions);
      const yawed = referenceYawed(a, series.get(reference)!, s.baselineTolerance_deg);
      if (yawed) ctx.manifest.warnings.push(`power.reference ${reference}: ${yawed}`);
      writeFileAtomic(join(ctx.runDir, 'power', 'power_gain.csv'), powerGainCsv(a));
      writeFileAtomic(join(ctx.runDir, 'power', 'window_power.csv'), windowPowerCsv(a));
      const out = [
        { kind: 'power-gain', path: 'power/power_gain.csv', description: `power gain of wake steering per turbine, yaw-offset level and direction-speed bin, combined, with bootstrap intervals (reference ${a.reference})` },
        { kind: 'window-power', path: 'power/window_power.csv', description: 'mean power, availability and flag (file and line) per window and turbine' },
      ];
      if (ctx.images) out.push(...(await powerFigure(a, ctx.runDir)));
      return out;
    },
  };
}

async function powerFigure(a: PowerAnalysis, runDir: string) {
  const { powerGainSvg } = await import('../render/powerGainFigure.ts');
  const { writeSvgAndPng } = await import('../render/write.ts');
  const svg = powerGainSvg(a);
  if (!svg) return [];
  await writeSvgAndPng(svg, join(runDir, 'images', 'power_gain'));
  return [
    { kind: 'image', path: 'images/power_gain.svg', description: 'power gain of wake steering per direction bin with bootstrap intervals, and combined' },
    { kind: 'image', path: 'images/power_gain.png', description: 'power gain of wake steering (PNG)' },
  ];
}

/**
 * Whether the reference turbine is itself yawed with the experiment: its own mean yaw offset (its nacelle direction
 * minus the window's wind direction, from its series) over the steered windows differs from that over the baseline
 * windows by more than the baseline tolerance. Then its loss under yaw raises every energy ratio, and the gains are
 * not the downstream turbines' alone. Returns the warning's text, or '' (no yaw column, no windows of a state, or
 * not yawed).
 */
function referenceYawed(a: PowerAnalysis, ref: Series, tolerance_deg: number): string {
  if (!ref.values.yaw_deg) return '';
  const mean = (state: 'baseline' | 'steered') => {
    const v = a.windows.filter((w) => w.state === state).map((w) => windowYaw(ref, w.window.start_s, w.window.end_s, w.window.direction_deg).yawOffset_deg).filter(Number.isFinite);
    return v.length ? v.reduce((x, y) => x + y, 0) / v.length : NaN;
  };
  const base = mean('baseline'), steered = mean('steered');
  if (!(Math.abs(steered - base) > tolerance_deg)) return '';
  const deg = (x: number) => (Math.abs(x) < 0.05 ? 0 : x).toFixed(1); // no "-0.0"
  return `the reference turbine is itself yawed (mean yaw offset ${deg(steered)} deg in the windows with yaw offset, ${deg(base)} deg without): its own loss under yaw raises every energy ratio, so the gains are not the compared turbines' alone; choose a turbine the yaw offsets do not affect (an unwaked one that is not yawed)`;
}

/** The turbine furthest upstream for the windows' mean wind direction. */
function mostUpstream(turbines: { id: string; position: [number, number, number] }[], windows: PowerWindow[]): string {
  let s = 0, cs = 0;
  for (const w of windows) if (Number.isFinite(w.direction_deg)) { s += Math.sin((w.direction_deg * Math.PI) / 180); cs += Math.cos((w.direction_deg * Math.PI) / 180); }
  const dir = (Math.atan2(s, cs) * 180) / Math.PI;
  const { dE, dN } = frameAxes(Number.isFinite(dir) ? dir : 270);
  return [...turbines].sort((a, b) => a.position[0] * dE + a.position[1] * dN - (b.position[0] * dE + b.position[1] * dN))[0].id;
}
