/** Tables of several turbines and the power gain of wake steering (wake/siteSummary.ts, power/output.ts). */
import { INT, SE, TEXT, TIME, byUnc, col, dec, sig, type Table } from '../dictionary.ts';

const rotor = { frame: 'rotor' } as const;
const site = { frame: 'site' } as const;

export const turbineWakesTable: Table = {
  id: 'turbine-wakes',
  path: 'wake/turbine_wakes.csv',
  row: 'one turbine whose wake crosses a plane in one window (several turbines), and one turbine it wakes',
  columns: [
    col('plane', 'text', TEXT, 'the row\'s name: plane@turbine, or the plane id for its own turbine'),
    col('turbine', 'text', TEXT, 'the turbine whose wake the row analyses, in its own rotor frame'),
    col('window', 'count', INT, 'window number'),
    col('start', 'iso', TIME, 'window start'),
    col('end', 'iso', TIME, 'window end'),
    col('window_kind', 'text', TEXT, 'fixed, list, segment, record or ensemble'),
    col('window_label', 'text', TEXT, 'the window\'s label'),
    col('state_level', 'deg', dec(3), 'segment windows: the yaw-offset level of the state'),
    col('yaw_offset', 'deg', dec(3), 'this turbine\'s nacelle minus wind direction in the window (its series)'),
    col('waked_by', 'text', TEXT, 'turbines whose wakes reach this one\'s rotor, nearest first, separated by ";"'),
    col('inflow_from', 'text', TEXT, 'where this turbine\'s inflow came from (rows upstream of it, the plane between it and the turbine waking it, or the campaign inflow)'),
    col('inflow_hub_speed', 'ms', dec(3), 'inflow speed at its hub'),
    col('flag', 'text', TEXT, 'wake-row flag (as in the wake table)'),
    col('reason', 'text', TEXT, 'why flagged, and where its region ends'),
    col('at_turbine', 'text', TEXT, 'a turbine this one wakes (empty: none in reach)'),
    col('at_x', 'm', dec(3), 'that turbine\'s distance downstream in this turbine\'s rotor frame', rotor),
    col('centre_y', 'm', byUnc('centre_y_se_m', 3), 'measured lateral wake centre just upstream of it (rows within 1.5 D), + = left looking downstream', rotor),
    col('centre_y_se', 'm', SE, 'its standard error'),
  ],
};

export const powerGainTable: Table = {
  id: 'power-gain',
  path: 'power/power_gain.csv',
  row: 'one compared turbine (or the group of them), yaw-offset level and wind-direction and wind-speed bin, then its combined row (bins "all")',
  columns: [
    col('turbine', 'text', TEXT, 'compared turbine; with two or more, a last group "TR-1+TR-2+..." of their summed power (the net gain of the group, the yawed turbines\' own losses included)'),
    col('reference', 'text', TEXT, 'reference turbine of the energy ratio'),
    col('level', 'deg', dec(3), 'yaw-offset level of the steered windows'),
    col('direction_lo', 'deg', dec(3), 'wind-direction bin, lower edge (from)', site),
    col('direction_hi', 'deg', dec(3), 'wind-direction bin, upper edge', site),
    col('speed_lo', 'ms', dec(3), 'wind-speed bin, lower edge'),
    col('speed_hi', 'ms', dec(3), 'wind-speed bin, upper edge'),
    col('windows_baseline', 'count', INT, 'windows without yaw offset in the bin'),
    col('windows_steered', 'count', INT, 'windows at the level in the bin'),
    col('ratio_baseline', 'one', sig(6), 'energy ratio without yaw offset: sum of the turbine\'s window-mean power over the reference\'s'),
    col('ratio_steered', 'one', sig(6), 'energy ratio at the level'),
    col('gain', 'one', byUnc('gain_se', 4), 'ratio_steered / ratio_baseline - 1; combined row: the gain over the direction-speed distribution'),
    col('gain_lo', 'one', dec(4), 'bootstrap percentile interval, lower end (Efron & Tibshirani 1993)'),
    col('gain_hi', 'one', dec(4), 'bootstrap percentile interval, upper end'),
    col('gain_se', 'one', SE, 'bootstrap standard error'),
    col('weight', 'one', dec(4), 'the bin\'s share of the windows in the combined gain (0: a state has too few windows)'),
    col('deflection', 'm', dec(2), 'mean measured wake centre at the turbine, steered minus baseline windows (rotor frame of the turbine waking it)', rotor),
    col('deflection_windows_baseline', 'count', INT, 'baseline windows with a measured centre'),
    col('deflection_windows_steered', 'count', INT, 'steered windows with a measured centre'),
    col('confidence', 'one', dec(3), 'confidence level of the interval'),
    col('replicates', 'count', INT, 'bootstrap replicates'),
  ],
};

export const windowPowerTable: Table = {
  id: 'window-power',
  path: 'power/window_power.csv',
  row: 'one turbine in one window of the power-gain analysis',
  columns: [
    col('window', 'count', INT, 'window number (the plan\'s)'),
    col('start', 'iso', TIME, 'window start'),
    col('end', 'iso', TIME, 'window end'),
    col('state', 'text', TEXT, 'baseline (no yaw offset), steered or unknown'),
    col('level', 'deg', dec(3), 'yaw-offset level of a steered window'),
    col('direction', 'deg', dec(3), 'wind direction (from) of the window', site),
    col('speed', 'ms', dec(3), 'wind speed used for binning (reference nacelle, else measured hub inflow)'),
    col('turbine', 'text', TEXT, 'turbine'),
    col('power', 'kw', dec(1), 'mean power of the available rows'),
    col('availability', 'one', dec(4), 'share of the rows reporting an available status and a power'),
    col('wind_speed', 'ms', dec(3), 'mean nacelle wind speed of those rows'),
    col('rows', 'count', INT, 'series rows in the window'),
    col('flag', 'text', TEXT, 'ok, no_rows, gap, negative_power or unavailable'),
    col('reason', 'text', TEXT, 'why flagged, naming the file and line'),
  ],
};
