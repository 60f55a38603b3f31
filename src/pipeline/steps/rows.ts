/**
 * The columns the flow steps read from the velocities table (DEVELOPERS.md column contract):
 * l, b, dist_c_mpc, dist_c_err_mpc, cz_cmb; and the row masks the steps agree on.
 */
import type { Table } from "apache-arrow";
import { float64Column, hasColumn } from "../../catalogue/columns.js";
import { validMask } from "../../catalogue/validity.js";
import { PeculiarError } from "../../errors.js";
import type { FlowRows } from "../../flow/bulkflow.js";

function need(t: Table, name: string, why: string): Float64Array {
  if (!hasColumn(t, name)) throw new PeculiarError("column", `the velocities table has no column ${name} (${why})`);
  return float64Column(t, name);
}

/** Flow rows of the valid rows that are not outliers (when an outlier column exists). */
export function flowRowsOf(t: Table, useOutliers = true): FlowRows {
  const n = t.numRows;
  const d = need(t, "dist_c_mpc", "comoving distance");
  const e = need(t, "dist_c_err_mpc", "comoving distance error");
  const frac = new Float64Array(n);
  for (let i = 0; i < n; i++) frac[i] = e[i]! / d[i]!;
  const use = validMask(t);
  if (useOutliers && hasColumn(t, "outlier")) {
    const o = float64Column(t, "outlier");
    for (let i = 0; i < n; i++) if (o[i] === 1) use[i] = 0;
  }
  return {
    lDeg: need(t, "l", "Galactic longitude"),
    bDeg: need(t, "b", "Galactic latitude"),
    distCMpc: d,
    distFracErr: frac,
    czCmbKmS: need(t, "cz_cmb", "the flow is fitted in the CMB frame: set steps.velocities.frame to \"cmb\""),
    use,
  };
}
