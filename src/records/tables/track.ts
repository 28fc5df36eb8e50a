/**
 * The trackers' tables under tracks/ (written by track/table.ts). Rotor frame (x downstream, y to the left looking
 * downstream, z up); deficit = 1 - apparent speed / free stream, the apparent speed being the radial velocity
 * projected on the window wind direction (assumed to be the flow direction).
 */
import { INT, SE, TEXT, TIME, byUnc, col, dec, type Table } from '../dictionary.ts';

const rotor = { frame: 'rotor' } as const;

export const trackerTable: Table = {
  id: 'tracks',
  path: 'tracks/<instrument>.csv',
  row: 'one downstream bin of one tracker in one scan, or in all scans of a window pooled (scan -1)',
  columns: [
    col('instrument', 'text', TEXT, 'tracker id (campaign instruments[].id)'),
    col('window', 'count', INT, 'window number within the run'),
    col('window_start', 'iso', TIME, 'start of the averaging window (inclusive)'),
    col('window_end', 'iso', TIME, 'end of the averaging window (exclusive)'),
    col('scan', 'count', INT, 'scan number within the window, -1 for all scans of the window pooled'),
    col('x', 'm', dec(3), 'downstream distance of the bin centre', rotor),
    col('x', 'D', dec(5), 'the same in rotor diameters', rotor),
    col('axis', 'text', TEXT, 'across-wake coordinate of centre and width: y (horizontal sector) or z (vertical sector)'),
    col('centre', 'm', byUnc('centre_se_m', 3), 'centre of a 1-D Gaussian fitted to the deficit across the wake (y, or height z)', rotor),
    col('centre_se', 'm', SE, 'its standard error', rotor),
    col('width', 'm', byUnc('width_se_m', 3), 'standard deviation of that Gaussian across the wake'),
    col('width_se', 'm', SE, 'its standard error'),
    col('amplitude', 'one', dec(4), 'peak line-of-sight deficit of the fit, against free_stream (with 7 or more bins the Gaussian sits on a fitted baseline, which corrects the free stream)'),
    col('centroid', 'm', dec(2), 'deficit-weighted centroid of the bins above half the peak (shape-independent centre); empty when the first or last bin with data is above half the peak (the sweep cuts that region)', rotor),
    col('r2', 'one', dec(4), 'coefficient of determination of the fit'),
    col('bins', 'count', INT, 'across-wake bins with data'),
    col('samples', 'count', INT, 'kept samples'),
    col('free_stream', 'ms', dec(3), 'free-stream speed the deficit is taken against: the reference (sector edges or inflow) times 1 - b, b the fit\'s baseline (outer bins still in the wake)'),
    col('free_stream_source', 'text', TEXT, 'where the free stream came from (inflow reference, or bins outside the wake)'),
    col('direction_bias_centre', 'm', dec(2), 'largest change of the centre when the assumed flow direction is moved by ± its uncertainty'),
    col('direction_bias_width', 'm', dec(2), 'largest change of the width for the same move'),
    col('flag', 'text', TEXT, 'ok, too_few_bins, no_free_stream, no_wake, off_edge or not_converged'),
    col('reason', 'text', TEXT, 'why the row is flagged'),
  ],
};

export const trackerProfilesTable: Table = {
  id: 'track-profiles',
  path: 'tracks/<instrument>_profiles.csv',
  row: 'one across-wake bin of a window-level row (scan -1) of tracks/<instrument>.csv (long format)',
  columns: [
    col('instrument', 'text', TEXT, 'tracker id'),
    col('window', 'count', INT, 'window number within the run'),
    col('x', 'm', dec(3), 'downstream distance of the bin centre', rotor),
    col('axis', 'text', TEXT, 'across-wake coordinate: y or z'),
    col('c', 'm', dec(3), 'across-wake bin centre along the axis (y, or height z)', rotor),
    col('deficit', 'one', byUnc('deficit_se', 4), 'line-of-sight deficit in the bin, against the free stream of the tracks table (corrected by the fit\'s baseline)'),
    col('deficit_se', 'one', SE, 'its standard uncertainty'),
  ],
};
