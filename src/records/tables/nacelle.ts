/**
 * The nacelle instruments' tables under nacelle/ (written by nacelle/table.ts). Site frame; directions = where the
 * wind comes from, clockwise from north; yaw misalignment = nacelle minus wind direction, positive when the nacelle is
 * turned clockwise (seen from above) from the wind.
 */
import { INT, SE, TEXT, TIME, byUnc, col, dec, sig, type Table } from '../dictionary.ts';

const site = { frame: 'site' } as const;

export const nacelleTable: Table = {
  id: 'nacelle',
  path: 'nacelle/<instrument>.csv',
  row: 'one nacelle instrument in one averaging window, at the chosen distance upstream',
  columns: [
    col('instrument', 'text', TEXT, 'instrument id (campaign instruments[].id)'),
    col('window', 'count', INT, 'window number within the run'),
    col('window_start', 'iso', TIME, 'start of the averaging window (inclusive)'),
    col('window_end', 'iso', TIME, 'end of the averaging window (exclusive)'),
    col('distance', 'm', dec(2), 'upstream distance of the reported values, along the nacelle axis'),
    col('distance', 'D', dec(4), 'the same in rotor diameters'),
    col('hub_speed', 'ms', byUnc('hub_speed_se_ms', 4), 'horizontal speed at hub height as measured: the beam pair (2 beams) or the mean of the two pairs (4 beams)'),
    col('hub_speed_se', 'ms', SE, 'its standard uncertainty'),
    col('speed_height', 'm', dec(2), 'height above ground where hub_speed_ms is measured at the distance: the beam pair\'s (2 beams: no second pair to carry it to the hub height) or the mean of the pairs\' (4 beams; hub_speed_shear_ms is at the hub height)'),
    col('hub_speed_shear', 'ms', byUnc('hub_speed_shear_se_ms', 4), '4 beams: the lower pair\'s speed carried to hub height by the power law V_lower (H / z_lower)^alpha'),
    col('hub_speed_shear_se', 'ms', SE, 'its standard uncertainty'),
    col('alpha', 'one', byUnc('alpha_se', 4), 'power-law shear exponent between the upper and lower pairs (4 beams)'),
    col('alpha_se', 'one', SE, 'its standard uncertainty'),
    col('direction', 'deg', byUnc('direction_se_deg', 3), 'wind direction at the distance, where the wind comes from', site),
    col('direction_se', 'deg', SE, 'its standard uncertainty', site),
    col('nacelle', 'deg', dec(3), 'window-mean nacelle direction from the turbine series (its rows in the window; without one, the series interpolated over the window), clockwise from north', site),
    col('yaw_misalignment', 'deg', byUnc('yaw_misalignment_se_deg', 3), 'nacelle minus wind direction in (-180, 180], positive = nacelle turned clockwise from the wind'),
    col('yaw_misalignment_se', 'deg', SE, 'its standard uncertainty'),
    col('induction_a', 'one', dec(4), 'axial induction factor a = (1 - sqrt(1 - Ct)) / 2, Ct from the thrust curve'),
    col('induction_ratio', 'one', sig(4), 'on-axis speed ratio U/U_inf at the distance, 1 - a(1 - ξ/sqrt(1 + ξ²)) with ξ = distance / rotor radius (vortex-sheet model, as used by Medici et al. 2011)'),
    col('free_stream', 'ms', byUnc('free_stream_se_ms', 4), 'hub speed (shear-corrected when available) divided by the induction ratio: the free-stream estimate'),
    col('free_stream_se', 'ms', SE, 'its standard uncertainty'),
    col('samples', 'count', INT, 'kept samples of the window'),
    col('flag', 'text', TEXT, 'ok, no_data, missing_beam, nacelle_series_gap or distance_outside_gates'),
    col('reason', 'text', TEXT, 'why the row is flagged'),
  ],
};

export const nacelleGatesTable: Table = {
  id: 'nacelle-gates',
  path: 'nacelle/<instrument>_gates.csv',
  row: 'one range gate and beam pair of a nacelle instrument in one window (a gate without a pair: one row with the pair empty)',
  columns: [
    col('instrument', 'text', TEXT, 'instrument id'),
    col('window', 'count', INT, 'window number within the run'),
    col('range', 'm', dec(2), 'range gate along the beams'),
    col('upstream', 'm', dec(2), 'mean upstream distance of the gate\'s samples along the nacelle axis'),
    col('pair', 'text', TEXT, 'beam pair: upper, lower, or hub (2 beams)'),
    col('height', 'm', dec(2), 'mean height of the pair\'s samples above ground', site),
    col('u', 'ms', dec(3), 'eastward component of the pair\'s horizontal wind (w = 0 assumed)', site),
    col('v', 'ms', dec(3), 'northward component', site),
    col('speed', 'ms', byUnc('speed_se_ms', 4), 'horizontal speed of the pair'),
    col('speed_se', 'ms', SE, 'its standard uncertainty'),
    col('direction', 'deg', byUnc('direction_se_deg', 3), 'wind direction of the pair, where the wind comes from', site),
    col('direction_se', 'deg', SE, 'its standard uncertainty', site),
    col('samples', 'count', INT, 'kept samples of the pair at this gate'),
    col('alpha', 'one', dec(4), 'shear exponent between the pairs at this gate (4 beams)'),
    col('hub_speed', 'ms', dec(3), 'hub-height speed at this gate (the pair, or the mean of the pairs)'),
    col('hub_speed_shear', 'ms', dec(3), 'shear-corrected hub-height speed at this gate (4 beams)'),
    col('ok', 'count', INT, '1 when every beam pair has samples at this gate'),
    col('note', 'text', TEXT, 'what is missing at this gate'),
  ],
};
