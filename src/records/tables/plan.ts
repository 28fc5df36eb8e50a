/** The planner's tables under plan/ (written by plan/writeOutputs.ts). */
import { INT, TEXT, col, dec, sig, type Table } from '../dictionary.ts';

const rotor = { frame: 'rotor' } as const;
const site = { frame: 'site' } as const;
const each = { perInstrument: true } as const;

export const planCellsTable: Table = {
  id: 'plan-cells',
  path: 'plan/cells_<plane>.csv',
  row: 'one cell of a plane, for the planned wind direction',
  columns: [
    col('cell', 'count', INT, 'cell index iy + iz ny'),
    col('iy', 'count', INT, 'grid index along y'),
    col('iz', 'count', INT, 'grid index along the second axis'),
    col('x', 'm', dec(3), 'cell centre, downstream', rotor),
    col('y', 'm', dec(3), 'cell centre, lateral (positive left looking downstream)', rotor),
    col('z', 'm', dec(3), 'cell centre, height above ground', rotor),
    col('east', 'm', dec(3), 'cell centre east of the site origin', site),
    col('north', 'm', dec(3), 'cell centre north of the site origin', site),
    col('up', 'm', dec(3), 'cell centre height in the site frame', site),
    col('in_rotor', 'count', INT, '1 when the cell centre lies within the rotor disk projected on the plane'),
    col('usable_beams', 'count', INT, 'instruments whose beam can reach the cell'),
    col('u_amplification', 'one', sig(4), 'error amplification of u, sqrt(diag((AᵀA)⁻¹))', rotor),
    col('v_amplification', 'one', sig(4), 'error amplification of v', rotor),
    col('w_amplification', 'one', sig(4), 'error amplification of w', rotor),
    col('condition_number', 'one', sig(4), 'condition number of the beam matrix'),
    col('min_crossing', 'deg', dec(2), 'smallest angle between two usable beams (two beams under w = 0: between their projections on the u, v plane, the components they resolve)'),
    col('u_pass', 'count', INT, '1 when u passes the amplification threshold'),
    col('v_pass', 'count', INT, '1 when v passes'),
    col('w_pass', 'count', INT, '1 when w passes'),
    col('trusted', 'count', INT, '1 when every target component passes: u, v and w, or u and v on horizontal planes and with two scanners (w = 0); the category then says trusted'),
    col('category', 'text', TEXT, 'trust category: trusted, or the first limit that fails'),
    col('reasons', 'text', TEXT, 'every limit that fails, separated by ";"'),
    col('elevation', 'deg', dec(3), 'beam elevation to the cell centre', each),
    col('range', 'm', dec(2), 'range to the cell centre', each),
    col('probe', 'm', dec(2), 'probe length along the beam (full width at half maximum of the weighting)', each),
    col('footprint', 'm', dec(2), 'probe length projected on the plane', each),
    col('footprint_cells', 'one', sig(3), 'projected probe length in cells', each),
    col('flags', 'text', TEXT, 'beam limits hit (";"-separated), empty when none', each),
  ],
};

export const pointingTable: Table = {
  id: 'plan-pointing',
  path: 'plan/pointing_<instrument>.csv',
  row: 'one point of an instrument\'s scan, in scan order per plane',
  columns: [
    col('plane', 'text', TEXT, 'plane id'),
    col('step', 'count', INT, 'position in the scan order'),
    col('cell', 'count', INT, 'cell index'),
    col('iy', 'count', INT, 'grid index along y'),
    col('iz', 'count', INT, 'grid index along the second axis'),
    col('target_east', 'm', dec(3), 'target east of the site origin', site),
    col('target_north', 'm', dec(3), 'target north of the site origin', site),
    col('target_up', 'm', dec(3), 'target height in the site frame', site),
    col('azimuth', 'deg', dec(6), 'azimuth to command (instrument frame, calibration applied), clockwise from north', { frame: 'instrument' }),
    col('elevation', 'deg', dec(6), 'elevation to command (instrument frame)', { frame: 'instrument' }),
    col('range', 'm', dec(3), 'range to command (range offset applied)', { frame: 'instrument' }),
    col('slew', 'deg', dec(3), 'angle slewed from the previous point'),
    col('start', 's', dec(3), 'dwell start within the pass'),
  ],
};

export const layoutsTable: Table = {
  id: 'plan-layouts',
  path: 'plan/layouts.csv',
  row: 'one instrument layout (rank 0: the campaign\'s own)',
  columns: [
    col('rank', 'count', INT, '0 for the campaign\'s own layout, then best first'),
    col('rotor_all', 'one', dec(4), 'share of the rotor disk resolved in u, v and w'),
    col('rotor_u', 'one', dec(4), 'share of the rotor disk resolved in u'),
    col('rotor_v', 'one', dec(4), 'share of the rotor disk resolved in v'),
    col('rotor_w', 'one', dec(4), 'share of the rotor disk resolved in w'),
    col('plane_all', 'one', dec(4), 'share of the planes resolved in u, v and w'),
    col('plane_u', 'one', dec(4), 'share of the planes resolved in u'),
    col('plane_v', 'one', dec(4), 'share of the planes resolved in v'),
    col('plane_w', 'one', dec(4), 'share of the planes resolved in w'),
    col('gain_rotor_all', 'one', dec(4), 'rotor_all minus the own layout\'s'),
    col('gain_plane_all', 'one', dec(4), 'plane_all minus the own layout\'s'),
    col('east', 'm', dec(2), 'instrument position east', { ...site, ...each }),
    col('north', 'm', dec(2), 'instrument position north', { ...site, ...each }),
    col('up', 'm', dec(2), 'instrument position up', { ...site, ...each }),
  ],
};
