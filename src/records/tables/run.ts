/** Tables of the run itself. */
import { INT, TEXT, col, type Table } from '../dictionary.ts';

export const rejectedRowsTable: Table = {
  id: 'rejected-rows',
  path: 'rejected_rows.csv',
  row: 'one sample or row that could not be read',
  columns: [
    col('file', 'text', TEXT, 'data file, relative to the campaign file'),
    col('line', 'count', INT, '1-based line of a text file (empty for NetCDF)'),
    col('variable', 'text', TEXT, 'NetCDF variable at fault (empty for text files)'),
    col('ray', 'count', INT, 'NetCDF: 0-based index along the ray (time) dimension'),
    col('gate', 'count', INT, 'NetCDF: 0-based index along the range dimension'),
    col('reason', 'text', TEXT, 'rejection reason (the manifest counts them)'),
    col('detail', 'text', TEXT, 'what was wrong, naming the column or variable and the value'),
    col('text', 'text', TEXT, 'the raw line (text files), at most 500 characters'),
  ],
};
