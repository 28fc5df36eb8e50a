/** The field table: one CSV per plane and window, one row per cell (written by pipeline/fieldTable.ts). */
import { INT, SE, TEXT, TIME, byUnc, col, dec, sig, type Table } from '../dictionary.ts';

const rotor = { frame: 'rotor' } as const;

export const MASK_MEANING =
  'why the component is not retrieved in the cell, empty when it is: no_data, too_few_samples, too_few_instruments, ' +
  'amplification_above_threshold, singular_geometry, assumed_zero (w = 0 assumed in a two-instrument cell, or in a cell of three or more whose three-component solve loses u or v), ' +
  'uncertainty_above_threshold (combined standard uncertainty above uncertainty.maxCombined_ms)';

/** What each budget term is (retrieval/budget.ts), for the column meanings. */
const TERM_MEANING: Record<string, string> = {
  noise: 'radial-velocity scatter term s²/n through the weighted least squares (as if samples were independent; equals the _se column)',
  sampling: 'turbulence sampling error of autocorrelated samples beyond the scatter term, s_t²(1/N_eff - 1/n) (Lenschow, Mann & Kristensen 1994)',
  pointing: 'azimuth, elevation and position errors of the instruments, propagated linearly through the beam geometry',
  probe: 'probe-volume averaging: half the weighting\'s second moment times the curvature of v_r along the beam',
  timing: 'non-simultaneity: each instrument\'s mean sample time offset from the window middle times its radial-velocity trend',
  position: 'first-order bias of reporting at the cell centre: each instrument\'s mean sample offset from the centre times the in-plane gradients, through the solve',
  direction: 'uncertainty of the window wind direction defining the rotor frame (s/√n of the direction series), turning the components and moving the cell',
  combined: 'combined standard uncertainty: root-sum-square of the seven terms (JCGM 100:2008), the noise and sampling terms times nu / (nu - 2) for their effective degrees of freedom nu (Welch-Satterthwaite; JCGM 101:2008, 6.4.9.4)',
};

/** The budget and turbulence columns, in writing order (pipeline/fieldTable.ts and fieldNetcdf.ts take them from here). */
export const BUDGET_COLUMNS = [
  ...(['u', 'v', 'w'] as const).flatMap((k) =>
    ['noise', 'sampling', 'pointing', 'probe', 'timing', 'position', 'direction', 'combined'].map((t) =>
      col(`${k}_unc_${t}`, 'ms', SE, `standard uncertainty of ${k}, ${t === 'combined' ? '' : 'term: '}${TERM_MEANING[t]}`, rotor),
    ),
  ),
  col('vr_turbulence_variance', 'm2s2', sig(3), 'radial-velocity variance with the noise variance removed (lag-0 extrapolation of the autocovariance), mean over the instruments used weighted by samples'),
  col('vr_noise_variance', 'm2s2', sig(3), 'radial-velocity noise variance (the autocovariance\'s jump at lag 0), mean over the instruments used'),
  col('integral_time_scale', 's', sig(3), 'integral time scale of the radial velocity from the lag correlation, mean over the instruments used'),
  col('effective_samples', 'count', sig(3), 'effective number of independent samples, summed over the instruments used'),
  col('u_variance', 'm2s2', sig(3), 'variance of u by the crossed-beam variance equations (covariances neglected; probe-volume filtered)', rotor),
  col('v_variance', 'm2s2', sig(3), 'variance of v (as u_variance)', rotor),
  col('w_variance', 'm2s2', sig(3), 'variance of w (as u_variance)', rotor),
  col('u_variance_se', 'm2s2', SE, 'standard uncertainty of u_variance (2 s⁴/N_eff per instrument, propagated)', rotor),
  col('v_variance_se', 'm2s2', SE, 'standard uncertainty of v_variance', rotor),
  col('w_variance_se', 'm2s2', SE, 'standard uncertainty of w_variance', rotor),
  col('turbulence_intensity', 'one', sig(3), 'turbulence intensity of u in the cell: sqrt(u_variance) / |u|', rotor),
];

export const fieldTable: Table = {
  id: 'field-table',
  path: 'fields/<plane>_w<window>_<start>.csv',
  also: ['fields/<plane>_bin<bin>.csv'],
  row: 'one cell of one plane in one averaging window',
  columns: [
    col('plane', 'text', TEXT, 'plane id (campaign planes[].id)'),
    col('window_start', 'iso', TIME, 'start of the averaging window (inclusive)'),
    col('window_end', 'iso', TIME, 'end of the averaging window (exclusive)'),
    col('y', 'm', dec(3), 'cell centre, lateral: rotor-frame y, positive to the left looking downstream', rotor),
    col('z', 'm', dec(3), 'cell centre, height above the turbine ground level (cross plane)', { ...rotor, only: 'cross' }),
    col('x', 'm', dec(3), 'cell centre, downstream distance from the rotor (horizontal plane)', { ...rotor, only: 'horizontal' }),
    col('y', 'D', dec(5), 'cell centre y in rotor diameters', rotor),
    col('z', 'D', dec(5), 'cell centre height in rotor diameters', { ...rotor, only: 'cross' }),
    col('x', 'D', dec(5), 'cell centre x in rotor diameters', { ...rotor, only: 'horizontal' }),
    col('u', 'ms', byUnc('u_se_ms', 4), 'streamwise wind component (along the window wind direction), weighted least squares', rotor),
    col('v', 'ms', byUnc('v_se_ms', 4), 'lateral wind component, positive to the left looking downstream', rotor),
    col('w', 'ms', byUnc('w_se_ms', 4), 'vertical wind component, positive up', { ...rotor, standardName: 'upward_air_velocity' }),
    col('u_se', 'ms', SE, 'standard uncertainty of u from the radial-velocity scatter and the geometry (the budget\'s noise term; a lower bound when samples are correlated: the combined standard uncertainty is u_unc_combined_ms)', rotor),
    col('v_se', 'ms', SE, 'standard uncertainty of v', rotor),
    col('w_se', 'ms', SE, 'standard uncertainty of w', rotor),
    col('u_amplification', 'one', sig(4), 'error amplification of u, sqrt(diag((AᵀA)⁻¹)) of the unit beam vectors (dilution of precision)', rotor),
    col('v_amplification', 'one', sig(4), 'error amplification of v', rotor),
    col('w_amplification', 'one', sig(4), 'error amplification of w', rotor),
    col('condition_number', 'one', sig(4), 'condition number of the beam matrix A (2-norm)'),
    col('min_crossing', 'deg', dec(2), 'smallest angle between two beams used in the cell (u and v from two-component cells with w = 0: between the beams\' projections on the u, v plane)'),
    col('samples', 'count', INT, 'accepted samples used in the cell, after the robust filter'),
    col('instruments', 'count', INT, 'instruments used in the cell'),
    col('u_mask', 'text', TEXT, MASK_MEANING),
    col('v_mask', 'text', TEXT, MASK_MEANING),
    col('w_mask', 'text', TEXT, MASK_MEANING),
    col('masked', 'count', INT, '1 when any component is masked or assumed, else 0'),
    col('direction', 'deg', dec(3), 'wind direction (from, clockwise from north) defining the rotor frame in this window', { frame: 'site' }),
    col('y_eff', 'm', dec(2), 'effective lateral position of the retrieved u within the cell (instruments\' mean sample positions weighted by their share in u)', rotor),
    col('z_eff', 'm', dec(2), 'effective height of the retrieved u within the cell', { ...rotor, only: 'cross' }),
    col('x_eff', 'm', dec(2), 'effective downstream position of the retrieved u within the cell', { ...rotor, only: 'horizontal' }),
    ...BUDGET_COLUMNS,
  ],
};
