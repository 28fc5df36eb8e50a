/**
 * The variables a condition bin can use (campaign `conditions.bins[].variable`), checked when the campaign loads:
 * - hub_speed_ms: hub-height inflow speed of the window from the campaign's inflow reference, m/s;
 * - wind_direction_deg: the window's wind direction (from), degrees;
 * - turbulence_intensity: from the inflow series column turbulence_intensity (needs inflow.kind: series);
 * - yaw_offset_deg: nacelle minus wind direction from the turbine series, degrees;
 * - <series>.<column>: the window mean of any numeric column of the turbine, inflow or direction series.
 * Whether a named column exists is checked when the series is read, before any output.
 */
export const CONDITION_VARIABLES = ['hub_speed_ms', 'wind_direction_deg', 'turbulence_intensity', 'yaw_offset_deg'] as const;
export const CONDITION_SERIES = ['turbine', 'inflow', 'direction'] as const;

/** Why a variable cannot be used with the series the campaign declares, or undefined when it can. */
export function conditionVariableProblem(v: string, has: { turbine: boolean; inflow: boolean; direction: boolean }): string | undefined {
  if ((CONDITION_VARIABLES as readonly string[]).includes(v)) {
    if (v === 'yaw_offset_deg' && !has.turbine) return 'yaw_offset_deg needs the turbine series (turbine.series)';
    if (v === 'turbulence_intensity' && !has.inflow) return 'turbulence_intensity needs an inflow series (inflow.kind: series) with a turbulence_intensity column';
    return undefined;
  }
  const m = /^([a-z]+)\.([A-Za-z0-9_.-]+)$/.exec(v);
  if (!m || !(CONDITION_SERIES as readonly string[]).includes(m[1])) {
    return `unknown variable; use one of ${CONDITION_VARIABLES.join(', ')} or <series>.<column> with series ${CONDITION_SERIES.join(', ')}`;
  }
  if (!has[m[1] as keyof typeof has]) return `the campaign has no ${m[1]} series`;
  return undefined;
}
