/**
 * Step 7, recentre: the velocity field seen from another origin (src/flow/recentre.ts), with the
 * Hubble law fitted from there jointly with a dipole, beside H0 from here (the Copernican check).
 * Each galaxy's 3-D velocity is its Hubble flow plus its radial peculiar velocity (radial-only:
 * tangential peculiar velocities are unknown and set to zero). Origins:
 *   group:richest | group:ID  the group's centroid at its error-weighted distance, moving with
 *                             H D + its peculiar velocity along the line of sight; its members
 *                             are left out of the fit from there (as 'peculiar recentre' does);
 *   id:NAME                   the galaxy with that id (it must have a distance);
 *   RA,DEC,DIST               a point (deg, deg, comoving Mpc) at rest in the Hubble flow.
 * The verdict is src/flow/copernican.ts's. Writes 07-recentre.arrow (s_mpc, v_there, used per
 * galaxy) and 07-recentre.json.
 */
import { join } from "node:path";
import { writeFileAtomic } from "../../catalogue/atomic.js";
import { stringColumn, tableFromColumns, type ColumnData } from "../../catalogue/columns.js";
import { recentre, type RecentreOrigin } from "../../flow/recentre.js";
import { copernicanCheck } from "../../flow/copernican.js";
import { excludeMembers, groupOrigin, pointOrigin, richestGroup } from "../../flow/origins.js";
import { PeculiarError } from "../../errors.js";
import type { RunContext, StepOutcome } from "../runner.js";
import { saveTable, type PipelineState } from "../state.js";

export async function recentreStep(ctx: RunContext<PipelineState>): Promise<StepOutcome> {
  const { state: s, plan } = ctx;
  const fit = s.flowFit;
  const t = s.grouped ?? s.flagged ?? s.velocities;
  if (!fit || !t) throw new PeculiarError("step", "re-centring needs the flow fit (step 'flow')");
  const on = plan.steps.recentre.on.trim();
  const h0 = fit.h0;
  const use = Uint8Array.from(fit.used);
  let origin: RecentreOrigin;
  let label: string;
  const gm = /^group:(.+)$/.exec(on);
  const im = /^id:(.+)$/.exec(on);
  if (gm) {
    const g = s.groups;
    if (!g || g.nGroups === 0) throw new PeculiarError("step", `'${on}': there are no groups (did step 'groups' run?)`);
    let k = -1;
    if (gm[1] === "richest") k = richestGroup(g);
    else {
      const id = Number(gm[1]);
      k = g.id.findIndex((x) => x === id);
      if (k < 0) throw new PeculiarError("step", `no group with id ${gm[1]}`, { expected: `1..${g.nGroups} or 'richest'` });
    }
    if (k < 0) throw new PeculiarError("step", `'${on}': every group is empty`);
    const placed = groupOrigin(g, k, { h0, omegaM: plan.steps.velocities.omegaM });
    const d = placed.distMpc;
    const where = placed.atRedshiftDistance ? "the redshift distance of its mean velocity (no member has a trusted distance)" : "its error-weighted distance";
    origin = { x: placed.x, y: placed.y, z: placed.z, vr: placed.vr };
    // The members are part of the origin: they do not enter the fit from there (as 'peculiar recentre').
    excludeMembers(g, k, use);
    label = `group ${g.id[k]} (${g.nMembers[k]} members) at RA ${g.raDeg[k]!.toFixed(3)}, Dec ${g.decDeg[k]!.toFixed(3)}, ${d.toFixed(1)} Mpc (${where})`;
  } else if (im) {
    const idCol = t.roles.id;
    if (!idCol) throw new PeculiarError("step", `'${on}': the survey has no id column (name one in inputs.redshifts.columns.id)`);
    const ids = stringColumn(t.table, idCol);
    const i = ids.indexOf(im[1]!);
    if (i < 0) throw new PeculiarError("step", `no galaxy with id ${im[1]} in column ${idCol}`);
    if (!Number.isFinite(fit.points.x[i]!)) throw new PeculiarError("step", `galaxy ${im[1]} has no usable distance, so it has no position to re-centre on`);
    origin = { index: i };
    label = `galaxy ${im[1]}`;
  } else {
    const parts = on.split(",").map((p) => Number(p.trim()));
    if (parts.length !== 3 || parts.some((p) => !Number.isFinite(p)) || !(parts[2]! > 0)) {
      throw new PeculiarError("input", "steps.recentre.on: not an origin", { value: on, expected: "group:richest, group:ID, id:NAME or RA,DEC,DIST (deg, deg, Mpc)" });
    }
    const p = pointOrigin(parts[0]!, parts[1]!, parts[2]!, h0);
    origin = { x: p.x, y: p.y, z: p.z, vr: p.vr };
    label = `point RA ${parts[0]}, Dec ${parts[1]}, ${parts[2]} Mpc (at rest in the Hubble flow)`;
  }
  const sigmaStar = plan.steps.flow.sigmaStarKmS;
  const opts = { h0, sigmaStar, fitDipole: true };
  // H0 from here on the same galaxies as from there (the origin's members left out), as 'peculiar recentre'.
  const here = recentre({ ...fit.points, use }, { x: 0, y: 0, z: 0, vr: 0 }, opts);
  const r = recentre({ ...fit.points, use }, origin, opts);
  if (!Number.isFinite(r.h0There)) throw new PeculiarError("step", `the Hubble law seen from ${label} could not be fitted (${r.nUsed} galaxies usable)`);
  const check = copernicanCheck({ h0: here.h0There, err: here.h0ThereErr, rms: here.residualRmsThere }, { h0: r.h0There, err: r.h0ThereErr, rms: r.residualRmsThere });
  const n = t.table.numRows;
  const used = Uint8Array.from(r.used);
  const sNulls = Uint8Array.from(r.s, (x) => (Number.isFinite(x) ? 0 : 1));
  const vNulls = Uint8Array.from(r.vAB, (x) => (Number.isFinite(x) ? 0 : 1));
  const cols: ColumnData[] = [
    { name: "s_mpc", kind: "float64", values: r.s, nulls: sNulls, meta: { unit: "Mpc", description: `distance from ${label}` } },
    { name: "v_there", kind: "float64", values: r.vAB, nulls: vNulls, meta: { unit: "km/s", description: `radial velocity seen from ${label} (radial-only velocities)` } },
    { name: "used", kind: "bool", values: used, meta: { description: "entered the fit from there" } },
  ];
  if (t.roles.id) cols.unshift({ name: t.roles.id, kind: "utf8", values: stringColumn(t.table, t.roles.id).map((x) => x ?? ""), meta: { description: "survey id" } });
  const table = tableFromColumns(cols, new Map(), n);
  const outputs = [await saveTable(ctx.outDir, "07-recentre.arrow", table)];
  const result = {
    origin: label,
    velocity_model: r.velocityModel,
    h0_here: { value: here.h0There, error: here.h0ThereErr },
    h0_there: { value: r.h0There, error: r.h0ThereErr },
    dipole_there: { vx: r.dipole[0], vy: r.dipole[1], vz: r.dipole[2], err: r.dipoleErr, frame: "galactic" },
    residual_rms_here_kms: here.residualRmsThere,
    residual_rms_there_kms: r.residualRmsThere,
    n_used: r.nUsed,
    copernican: { verdict: check.verdict, dH: check.dH, dH_err: check.dHErr, z: check.z, scatter_ratio: check.scatterRatio },
  };
  await writeFileAtomic(join(ctx.outDir, "07-recentre.json"), JSON.stringify(result, null, 2) + "\n");
  outputs.push("07-recentre.json");
  return {
    outputs,
    numbers: { origin: label, h0Here: here.h0There, h0HereErr: here.h0ThereErr, h0There: r.h0There, h0ThereErr: r.h0ThereErr, dipoleThere: r.dipole, nUsed: r.nUsed, copernican: `${check.verdict} (${Math.abs(check.z).toFixed(2)} sigma)` },
    notes: ["velocities are radial-only: tangential peculiar velocities are unknown and taken as zero"],
  };
}
