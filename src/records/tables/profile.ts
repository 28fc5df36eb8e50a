/** The profilers' table under profiles/ (written by profile/table.ts). Site frame: u east, v north, w up. */
import { INT, SE, TEXT, TIME, byUnc, col, dec, sig, type Table } from '../dictionary.ts';

const site = { frame: 'site' } as const;

export const profilerTable: Table = {
  id: 'profile',
  path: 'profiles/<instrument>.csv',
  also: ['profiles/<instrument>_bins.csv'],
  row: 'one height of one profiler in one averaging window (in _bins.csv: in one condition bin, from merged statistics)',
  columns: [
    col('instrument', 'text', TEXT, 'profiler id (campaign instruments[].id)'),
    col('window', 'count', INT, 'window number within the run; in _bins.csv the condition bin number'),
    col('kind', 'text', TEXT, 'why the window exists: fixed, list, segment or record; ensemble for a condition bin'),
    col('window_start', 'iso', TIME, 'start of the averaging window (inclusive)'),
    col('window_end', 'iso', TIME, 'end of the averaging window (exclusive)'),
    col('height', 'm', dec(3), 'centre of the height bin, above ground (labels the bin)', site),
    col('sample_height', 'm', dec(3), 'mean height above ground of the slanted-beam samples in the fit: the height the row\'s horizontal wind belongs to (gates rarely sit on the bin centre; a DBS set\'s vertical beam reaches the bin from other gates); the inflow law is fitted at these heights', site),
    col('radius', 'm', dec(2), 'mean horizontal distance of the samples from the instrument (the ring radius of a VAD)'),
    col('u', 'ms', byUnc('u_se_ms', 4), 'eastward wind component of the uniform-wind fit (Browning & Wexler 1968)', site),
    col('v', 'ms', byUnc('v_se_ms', 4), 'northward wind component', site),
    col('w', 'ms', byUnc('w_se_ms', 4), 'upward wind component', site),
    col('u_se', 'ms', SE, 'standard uncertainty of u (sector scatter, inflated by sqrt(chi²/dof) when the residual exceeds it)', site),
    col('v_se', 'ms', SE, 'standard uncertainty of v', site),
    col('w_se', 'ms', SE, 'standard uncertainty of w', site),
    col('speed', 'ms', byUnc('speed_se_ms', 4), 'horizontal wind speed sqrt(u² + v²)'),
    col('speed_se', 'ms', SE, 'its standard uncertainty (first-order propagation, GUM 5.1.2)'),
    col('direction', 'deg', byUnc('direction_se_deg', 3), 'wind direction, where the wind comes from, clockwise from north', site),
    col('direction_se', 'deg', SE, 'its standard uncertainty (first-order propagation)'),
    col('sectors', 'count', INT, 'azimuth sectors (VAD) or beams (DBS) in the fit'),
    col('samples', 'count', INT, 'kept samples in the fit'),
    col('rmse', 'ms', sig(3), 'sample-weighted RMS residual of the sector means about the uniform-wind fit'),
    col('r2', 'one', dec(4), 'share of the sector-mean variance the uniform wind explains (homogeneity check)'),
    col('chi2_dof', 'one', sig(3), 'chi² per degree of freedom of the weighted fit (empty without a degree of freedom)'),
    col('max_gap', 'deg', dec(2), 'largest azimuth gap between slanted sectors with data'),
    col('flag', 'text', TEXT, 'ok, no_data, too_few_azimuths, azimuth_gap, missing_beam, singular or inhomogeneous'),
    col('reason', 'text', TEXT, 'why the row is flagged'),
  ],
};
