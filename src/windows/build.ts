/**
 * The window plan of a campaign, built before the samples are read (from the campaign, its series and the time
 * of the first sample), so that the ingest only looks times up.
 */
import type { Campaign } from '../campaign/types.ts';
import { ConfigError } from '../errors.ts';
import type { Series } from '../io/series.ts';
import { parseTime } from '../io/time.ts';
import { directionAt } from './direction.ts';
import { windowsFromFile, windowsFromItems } from './list.ts';
import { fixedPlan, recordPlan, tablePlan, type WindowPlan } from './plan.ts';
import { defaultSegmentGap, medianInterval, segmentWindows, type SegmentSummary } from './segments.ts';

export interface WindowPlanInputs {
  /** Time of the earliest sample of the run, Unix seconds (for the "first-sample" anchor). */
  firstSample_s?: number;
  /** Turbine series (yaw_deg, optional wind_direction_deg, power_kw), for segment windows. */
  turbineSeries?: Series;
  /** Wind-direction series of the campaign (direction_deg), when it has one. */
  directionSeries?: Series;
}

export interface BuiltWindowPlan {
  plan: WindowPlan;
  /** Segment windows: how the series time divided into windows and exclusions. */
  segments?: SegmentSummary;
  /** The anchor used by fixed windows, Unix seconds. */
  anchor_s?: number;
}

export function buildWindowPlan(c: Campaign, inputs: WindowPlanInputs): BuiltWindowPlan {
  const w = c.windows;
  switch (w.kind) {
    case 'record':
      return { plan: recordPlan() };
    case 'fixed': {
      let anchor: number;
      if (w.anchor === 'epoch') anchor = 0;
      else if (w.anchor === 'first-sample') anchor = inputs.firstSample_s ?? NaN;
      else anchor = parseTime(w.anchor);
      // No sample at all: any anchor will do (nothing falls in a window).
      if (!Number.isFinite(anchor)) anchor = 0;
      return { plan: fixedPlan(anchor, w.length_s, w.step_s ?? w.length_s), anchor_s: anchor };
    }
    case 'list': {
      const list = w.file ? windowsFromFile(w.file, w.columns, w.allowOverlap) : windowsFromItems(w.items ?? [], c.sourceFile, w.allowOverlap);
      return { plan: tablePlan('list', list) };
    }
    case 'segments': {
      const ts = inputs.turbineSeries;
      if (!ts) throw new ConfigError(c.sourceFile, 'windows', 'segment windows need the turbine series (turbine.series with yaw_deg)');
      const maxGap_s = w.maxGap_s ?? defaultSegmentGap(ts);
      // A row's wind direction: the nearest direction row, within maxGap_s or the direction series' own median
      // interval, whichever is longer (a 10-minute mean stands for its period: with one row every 600 s, the nearest
      // is at most 300 s away, one missing row makes it 600 s).
      const reach = Math.max(maxGap_s, inputs.directionSeries ? medianInterval(inputs.directionSeries) : 0);
      const { windows, summary } = segmentWindows(ts, (t) => directionAt(c, inputs.directionSeries, t, reach), {
        levels_deg: w.levels_deg, tolerance_deg: w.tolerance_deg, minDuration_s: w.minDuration_s, maxGap_s,
        settle_s: w.settle_s, windSector_deg: w.windSector_deg, power_kw: w.power_kw, subWindow_s: w.subWindow_s,
      });
      if (windows.length === 0) {
        const ex = Object.entries(summary.excluded_s).filter(([, v]) => v > 0).map(([k, v]) => `${k} ${Math.round(v)} s`).join(', ');
        throw new ConfigError(c.sourceFile, 'windows', `no steady span of at least ${w.minDuration_s} s at the levels ${w.levels_deg.join(', ')} deg in ${ts.file} (excluded: ${ex || 'everything'}; rows over ${Math.round(maxGap_s)} s apart are a gap)`);
      }
      return { plan: tablePlan('segment', windows), segments: summary };
    }
  }
}
