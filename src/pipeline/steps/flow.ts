/**
 * Step 6, flow: H0 and the bulk flow from here (src/flow/bulkflow.ts fitFlow: the Hubble law plus a
 * dipole fitted in ln D, iterated in H), leaving out invalid rows and flagged outliers.
 * Writes 06-flow.json.
 *
 * Zero-point systematics: the offset of each non-reference distance catalogue is known only to
 * its error sigma_zp, and that error is common to all of its galaxies, so it does not average
 * down. It is propagated numerically: each galaxy's distance is scaled by 10^(-0.2 f sigma_zp),
 * f = the catalogue's share of the galaxy's inverse-variance weight (what moving the offset by
 * +sigma_zp does to the combined modulus), the flow refitted, and the shifts of H0 and of the bulk
 * flow added to the statistical covariance as a fully correlated term (one per catalogue). The
 * comoving distance is scaled like the luminosity distance (exact to O(z) in the scale factor).
 */
import { join } from "node:path";
import { writeFileAtomic } from "../../catalogue/atomic.js";
import type { Table } from "apache-arrow";
import { float64Column, hasColumn } from "../../catalogue/columns.js";
import { fitFlow, type FlowFit, type FlowOptions, type FlowRows } from "../../flow/bulkflow.js";
import { PeculiarError } from "../../errors.js";
import type { RunContext, StepOutcome } from "../runner.js";
import type { PipelineState } from "../state.js";
import { flowRowsOfTable } from "../../flow/table.js";

export async function flowStep(ctx: RunContext<PipelineState>): Promise<StepOutcome> {
  const { state: s, plan } = ctx;
  const cat = s.grouped ?? s.flagged ?? s.velocities;
  if (!cat) throw new PeculiarError("step", "no velocities table");
  const t = cat.table;
  const f = plan.steps.flow;
  const rows = flowRowsOfTable(t, cat.raDeg, cat.decDeg, {}, cat.file, true).rows;
  const o: FlowOptions = { sigmaStar: f.sigmaStarKmS, cosmology: { h0: plan.steps.velocities.h0, omegaM: plan.steps.velocities.omegaM } };
  if (f.maxDistMpc !== undefined) o.maxDistMpc = f.maxDistMpc;
  const fit = fitFlow(rows, o);
  if (!fit.ok) throw new PeculiarError("step", `the flow fit did not converge (${fit.nUsed} rows usable)`);
  const [vx, vy, vz] = fit.bulkGal;
  const sys = zeroPointSystematics(t, s, rows, o, fit);
  const cov = Array.from(fit.bulkCov);
  let h0Var = fit.h0Err ** 2;
  for (const z of sys) {
    h0Var += z.dH0 ** 2;
    for (let a = 0; a < 3; a++) for (let c = 0; c < 3; c++) cov[3 * a + c]! += z.dBulk[a]! * z.dBulk[c]!;
  }
  const h0Err = Math.sqrt(h0Var);
  const B = [vx, vy, vz];
  let q = 0;
  for (let a = 0; a < 3; a++) for (let c = 0; c < 3; c++) q += B[a]! * cov[3 * a + c]! * B[c]!;
  const amplitudeErr = fit.amplitude > 0 ? Math.sqrt(q) / fit.amplitude : NaN;
  const bulk = { vx, vy, vz, cov, amplitude: fit.amplitude, amplitudeErr, lDeg: fit.lDeg, bDeg: fit.bDeg };
  s.flow = { h0: { value: fit.h0, error: h0Err }, bulk, nUsed: fit.nUsed };
  s.flowFit = fit;
  const result = {
    h0: { value: fit.h0, error: h0Err, error_stat: fit.h0Err, error_zero_points: Math.sqrt(Math.max(0, h0Var - fit.h0Err ** 2)) },
    bulk_flow: { vx, vy, vz, frame: "galactic", amplitude: fit.amplitude, amplitude_err: amplitudeErr, l: fit.lDeg, b: fit.bDeg, sgl: fit.sglDeg, sgb: fit.sgbDeg, cov, cov_stat: Array.from(fit.bulkCov) },
    zero_point_systematics: sys,
    n_used: fit.nUsed,
    chi2: fit.chi2,
    dof: fit.dof,
    residual_rms_kms: fit.residualRms,
    iterations: fit.iterations,
    settings: { sigmaStarKmS: f.sigmaStarKmS, maxDistMpc: f.maxDistMpc ?? null, startH0: plan.steps.velocities.h0, omegaM: plan.steps.velocities.omegaM, outliersLeftOut: true },
  };
  const name = "06-flow.json";
  await writeFileAtomic(join(ctx.outDir, name), JSON.stringify(result, null, 2) + "\n");
  return {
    outputs: [name],
    numbers: { h0: fit.h0, h0Err, h0ErrStat: fit.h0Err, zeroPointShifts: sys, bulkFlowGal: [vx, vy, vz], amplitude: fit.amplitude, amplitudeErr, lDeg: fit.lDeg, bDeg: fit.bDeg, nUsed: fit.nUsed, chi2Dof: fit.dof > 0 ? fit.chi2 / fit.dof : NaN },
  };
}

interface ZeroPointShift {
  alias: string;
  offsetErrMag: number;
  /** Change of H0 and of the bulk flow (Galactic km/s) when the offset moves by +offsetErrMag. */
  dH0: number;
  dBulk: [number, number, number];
}

function zeroPointSystematics(t: Table, s: PipelineState, rows: FlowRows, o: FlowOptions, fit: FlowFit): ZeroPointShift[] {
  const out: ZeroPointShift[] = [];
  const n = t.numRows;
  const weights = s.matches.map((m) => {
    const mu = hasColumn(t, `${m.alias}_mu`) ? float64Column(t, `${m.alias}_mu`) : undefined;
    const err = hasColumn(t, `${m.alias}_mu_err`) ? float64Column(t, `${m.alias}_mu_err`) : undefined;
    const w = new Float64Array(n);
    if (mu && err) for (let i = 0; i < n; i++) if (Number.isFinite(mu[i]!) && err[i]! > 0) w[i] = 1 / (err[i]! * err[i]!);
    return { alias: m.alias, w };
  });
  for (const off of s.offsets) {
    if (!(off.errMag > 0)) continue;
    const mine = weights.find((x) => x.alias === off.alias);
    if (!mine) continue;
    const d = new Float64Array(n);
    for (let i = 0; i < n; i++) {
      let total = 0;
      for (const x of weights) total += x.w[i]!;
      const f = total > 0 ? mine.w[i]! / total : 0;
      d[i] = rows.distCMpc[i]! * Math.pow(10, -0.2 * f * off.errMag);
    }
    const shifted = fitFlow({ ...rows, distCMpc: d }, o);
    out.push({
      alias: off.alias,
      offsetErrMag: off.errMag,
      dH0: shifted.h0 - fit.h0,
      dBulk: [shifted.bulkGal[0] - fit.bulkGal[0], shifted.bulkGal[1] - fit.bulkGal[1], shifted.bulkGal[2] - fit.bulkGal[2]],
    });
  }
  return out;
}
