/**
 * NetCDF variables of the per-plane field files (fields/<plane>.nc) that have no column in the field table: the
 * coordinates and the site-frame components. The other variables are the field table's numeric columns under their
 * names (u, u_se, u_amplification, ..., with CF units), declared in fields.ts.
 */
import { col, dec, TEXT, type Column } from '../dictionary.ts';

const site = { frame: 'site' } as const;

export const NETCDF_VARIABLES: Column[] = [
  col('window', 'unix_s', dec(3), 'averaging window centre (dimension window); bounds in window_bounds', { standardName: 'time' }),
  col('window_bounds', 'unix_s', dec(3), 'start (inclusive) and end (exclusive) of each window'),
  col('window_index', 'count', dec(0), 'window number within the run (as in the CSV file names)'),
  col('bin', 'count', dec(0), 'condition bin number (dimension bin of fields/<plane>_bins.nc, the ensembles)'),
  col('bin_label', 'text', TEXT, 'condition of the bin, as in wake/ensembles.csv (fields/<plane>_bins.nc)'),
  col('eastward_wind', 'ms', dec(4), 'site-frame east component of (u, v) in the window\'s rotor frame', { ...site, standardName: 'eastward_wind' }),
  col('northward_wind', 'ms', dec(4), 'site-frame north component of (u, v)', { ...site, standardName: 'northward_wind' }),
  col('east', 'm', dec(3), 'cell centre east of the site origin in each window (the rotor frame turns with the wind)', site),
  col('north', 'm', dec(3), 'cell centre north of the site origin in each window', site),
  col('longitude', 'deg', dec(7), 'cell centre longitude, WGS84 (only when the site is georeferenced)', { ...site, standardName: 'longitude' }),
  col('latitude', 'deg', dec(7), 'cell centre latitude, WGS84 (only when the site is georeferenced)', { ...site, standardName: 'latitude' }),
];
