/**
 * The values of the budget and turbulence columns of a field (records/tables/fields.ts BUDGET_COLUMNS, same order),
 * for the field table and the NetCDF file: one grid-shaped array per column, NaN where the budget is off or absent.
 */
import { BUDGET_TERMS, COMPONENTS } from '../retrieval/budget.ts';
import type { FieldResult } from '../retrieval/types.ts';

/** The NaN columns of a field without a budget, per cell count: made once, shared (callers only read them). */
const noBudget = new Map<number, Float64Array[]>();

/** The arrays, in column order; without a budget, shared all-NaN arrays that callers must not write into. */
export function budgetArrays(f: FieldResult): Float64Array[] {
  const b = f.budget;
  const n = f.grid.ny * f.grid.nz;
  if (!b) {
    let a = noBudget.get(n);
    if (!a) noBudget.set(n, (a = Array.from({ length: COMPONENTS.length * (BUDGET_TERMS.length + 1) + 11 }, () => new Float64Array(n).fill(NaN))));
    return a;
  }
  const t = b.turbulence;
  return [
    ...COMPONENTS.flatMap((k) => [...BUDGET_TERMS.map((term) => b.terms[k][term]), b.combined[k]]),
    t.vrTurbVar, t.vrNoiseVar, t.tau_s, t.neff, t.variance.u, t.variance.v, t.variance.w,
    t.varianceSe.u, t.varianceSe.v, t.varianceSe.w, t.tiU,
  ];
}
