/**
 * The targets of a run beside the planes: each instrument goes to the target of its role (plane scanners to the
 * planes, profilers to the profile target, nacelle instruments to the nacelle target, trackers to the track target),
 * and instruments whose beam angles are nacelle-relative get their nacelle frame (geometry/nacelle.ts) from the
 * turbine series and their optional inclinometer series. Only the targets a campaign uses are made, so a plane-only
 * campaign runs exactly as before.
 */
import type { Campaign } from '../campaign/types.ts';
import { planeOrigin } from '../campaign/turbines.ts';
import { gridSpecOf } from '../grid/grid.ts';
import { PlaneTarget } from '../grid/planeTarget.ts';
import type { PlaneGrid } from '../retrieval/settings.ts';
import { ConfigError } from '../errors.ts';
import { NacelleFrame } from '../geometry/nacelle.ts';
import type { SampleTarget } from '../grid/target.ts';
import { readSeries, type Series } from '../io/series.ts';
import { NacelleTarget, nacelleLayouts } from '../nacelle/target.ts';
import { ProfileTarget, profilerLayouts } from '../profile/target.ts';
import { TrackTarget, trackerLayouts } from '../track/target.ts';

export interface RunTargets {
  targets: SampleTarget[];
  targetOf: Int32Array;
  nacelleFrames: (NacelleFrame | undefined)[];
  /** Index in `targets` of each sibling target (-1 when the campaign has none). */
  profileIndex: number;
  nacelleIndex: number;
  trackIndex: number;
  profile?: ProfileTarget;
  nacelle?: NacelleTarget;
  track?: TrackTarget;
  /** The turbine series when an instrument needed it (nacelle frames), for the nacelle solver. */
  turbineSeries?: Series;
  /** Per instrument index: its inclinometer series (orientationSeries), for the nacelle solver's gap check. */
  orientationSeries: (Series | undefined)[];
}

/** Builds the targets; `planes` is the plane target (index 0). */
export function runTargets(c: Campaign, planes: SampleTarget): RunTargets {
  const I = c.instruments.length;
  const targets: SampleTarget[] = [planes];
  const targetOf = new Int32Array(I).fill(0);
  const nacelleFrames: (NacelleFrame | undefined)[] = new Array(I).fill(undefined);
  const out: RunTargets = { targets, targetOf, nacelleFrames, profileIndex: -1, nacelleIndex: -1, trackIndex: -1, orientationSeries: new Array(I).fill(undefined) };
  const onNacelle = c.instruments.filter((i) => i.beamFrame === 'nacelle');
  if (onNacelle.length) {
    if (!c.turbine.series) throw new ConfigError(c.sourceFile, 'turbine.series', 'instruments with nacelle-relative beams need the turbine series (time, yaw_deg)');
    const ts = readSeries(c.turbine.series.file, c.turbine.series.columns, ['yaw_deg'], ['wind_direction_deg', 'power_kw'], { holes: ['yaw_deg'] });
    out.turbineSeries = ts;
    for (const ins of onNacelle) {
      const orient = ins.orientationSeries ? readSeries(ins.orientationSeries.file, ins.orientationSeries.columns, [], ['tilt_deg', 'roll_deg']) : undefined;
      out.orientationSeries[ins.index] = orient;
      const maxGap = ins.nacelle?.maxGap_s ?? 120;
      nacelleFrames[ins.index] = new NacelleFrame(ts, maxGap, ins.calibration, c.turbine.position, ins.mount, ins.role === 'nacelle', orient);
    }
  }
  const profilers = profilerLayouts(c.instruments);
  if (profilers.length) {
    out.profile = new ProfileTarget(profilers, I, c.site.groundLevel_m);
    out.profileIndex = targets.push(out.profile) - 1;
    for (const l of profilers) targetOf[l.instrument.index] = out.profileIndex;
  }
  const nac = nacelleLayouts(c.instruments);
  if (nac.length) {
    out.nacelle = new NacelleTarget(nac, I, nacelleFrames, c.site.groundLevel_m);
    out.nacelleIndex = targets.push(out.nacelle) - 1;
    for (const l of nac) targetOf[l.instrument.index] = out.nacelleIndex;
  }
  const trackers = trackerLayouts(c.instruments, c.windows.kind === 'fixed' ? c.windows.length_s : NaN);
  if (trackers.length) {
    out.track = new TrackTarget(trackers, I, c.turbine.position);
    out.trackIndex = targets.push(out.track) - 1;
    for (const l of trackers) targetOf[l.instrument.index] = out.trackIndex;
  }
  return out;
}

/** The planes of a campaign, their target and every sibling target: what a run and each shard of it build. */
export function campaignTargets(c: Campaign): { planes: PlaneGrid[]; planeTarget: PlaneTarget; rt: RunTargets } {
  const planes: PlaneGrid[] = c.planes.map((spec) => ({ spec, grid: gridSpecOf(spec) }));
  // The plane target takes the plane scanners' samples; profilers, nacelle instruments and trackers go to their own.
  const planeTarget = new PlaneTarget(
    planes.map((p) => ({
      orientation: p.spec.orientation, level_m: p.spec.orientation === 'cross' ? p.spec.x_m : p.spec.z_m, thickness_m: p.spec.thickness_m, grid: p.grid,
      origin: planeOrigin(c, p.spec), heights: p.spec.heights,
    })),
    c.instruments.length, c.turbine.position,
  );
  return { planes, planeTarget, rt: runTargets(c, planeTarget) };
}
