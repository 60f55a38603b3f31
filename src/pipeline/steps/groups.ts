/**
 * Step 5, groups: friends-of-friends in redshift space over every survey galaxy with a position and
 * a redshift (src/flow/fof.ts; a distance is not needed), group_id and group_size added to the table,
 * and the groups table (src/flow/groups.ts) written as 05-groups-table.arrow. The group distances
 * use only members with a valid distance that is not an outlier. Also writes final.arrow, the table
 * the view shows.
 */
import { float64Column, hasColumn, withColumns, type ColumnData } from "../../catalogue/columns.js";
import { recordStep } from "../../catalogue/meta.js";
import { tableFromColumns } from "../../catalogue/columns.js";
import { friendsOfFriends, type FofOptions } from "../../flow/fof.js";
import { groupTable, type GroupTable } from "../../flow/groups.js";
import { PeculiarError } from "../../errors.js";
import { DEG } from "../../sky/angles.js";
import type { RunContext, StepOutcome } from "../runner.js";
import { saveTable, withTable, type ClusterOutcome, type PipelineState } from "../state.js";
import { flowRowsOfTable } from "../../flow/table.js";
import { trustedDistances } from "../../flow/bulkflow.js";

function groupsTableArrow(g: GroupTable) {
  const f = (name: string, values: Float64Array, unit: string, description: string): ColumnData => {
    const nulls = Uint8Array.from(values, (x) => (Number.isFinite(x) ? 0 : 1));
    return { name, kind: "float64", values, nulls, meta: { unit, description } };
  };
  return tableFromColumns([
    { name: "group_id", kind: "int32", values: g.id, meta: { description: "group id (as group_id in the galaxy table)" } },
    { name: "n_members", kind: "int32", values: g.nMembers, meta: { description: "members" } },
    f("ra", g.raDeg, "deg", "centroid right ascension"),
    f("dec", g.decDeg, "deg", "centroid declination"),
    f("cz_mean", g.czMeanKmS, "km/s", "mean cz of the members"),
    f("cz_mean_err", g.czMeanErrKmS, "km/s", "error of cz_mean (sigma / sqrt(n))"),
    f("sigma_v", g.sigmaKmS, "km/s", "gapper velocity dispersion (Beers, Flynn & Gebhardt 1990), observed"),
    f("sigma_v_rest", g.sigmaRestKmS, "km/s", "velocity dispersion in the group's rest frame"),
    f("r_proj_mpc", g.rProjMpc, "Mpc", "rms projected radius"),
    { name: "n_dist", kind: "int32", values: g.nDist, meta: { description: "members with a distance" } },
    f("dist_c_mpc", g.distCMpc, "Mpc", "error-weighted comoving distance (mean of ln D)"),
    f("dist_c_err_mpc", g.distCErrMpc, "Mpc", "error of dist_c_mpc"),
    f("v_pec", g.vPecKmS, "km/s", "peculiar velocity of the group"),
    f("v_pec_err", g.vPecErrKmS, "km/s", "error of v_pec"),
  ]);
}

/** The richest group: its numbers and, with a truth file, its offsets from the injected cluster. */
function richestGroup(g: GroupTable, raDeg: Float64Array, decDeg: Float64Array, s: PipelineState): ClusterOutcome | undefined {
  if (g.nGroups === 0) return undefined;
  let k = 0;
  for (let q = 1; q < g.nGroups; q++) if (g.nMembers[q]! > g.nMembers[k]!) k = q;
  const m = g.nMembers[k]!;
  const ra0 = g.raDeg[k]!;
  const dec0 = g.decDeg[k]!;
  // Per-axis scatter of the members about the centroid (tangent plane), for the centroid's error.
  let sxx = 0;
  let syy = 0;
  for (let q = g.memberStart[k]!; q < g.memberStart[k + 1]!; q++) {
    const i = g.members[q]!;
    const dx = (((raDeg[i]! - ra0 + 540) % 360) - 180) * Math.cos(dec0 * DEG);
    const dy = decDeg[i]! - dec0;
    sxx += dx * dx;
    syy += dy * dy;
  }
  const perAxisRms = Math.sqrt((sxx + syy) / (2 * Math.max(1, m - 1)));
  const out: ClusterOutcome = {
    groupId: g.id[k]!,
    members: m,
    raDeg: ra0,
    decDeg: dec0,
    dRaCosDecDeg: NaN,
    dDecDeg: NaN,
    posErrDeg: perAxisRms / Math.sqrt(m),
    czKmS: g.czMeanKmS[k]!,
    czErrKmS: g.czMeanErrKmS[k]!,
    sigmaKmS: g.sigmaRestKmS[k]!,
    sigmaErrKmS: g.sigmaRestKmS[k]! / Math.sqrt(2 * Math.max(1, m - 1)),
    distCMpc: g.distCMpc[k]!,
    distCErrMpc: g.distCErrMpc[k]!,
  };
  const t = s.truth?.cluster;
  if (t) {
    out.dRaCosDecDeg = (((ra0 - t.raDeg + 540) % 360) - 180) * Math.cos(t.decDeg * DEG);
    out.dDecDeg = dec0 - t.decDeg;
  }
  return out;
}

export async function groupsStep(ctx: RunContext<PipelineState>): Promise<StepOutcome> {
  const { state: s, plan } = ctx;
  const src = s.flagged ?? s.velocities;
  if (!src) throw new PeculiarError("step", "no velocities table");
  const frame = s.frame ?? plan.steps.velocities.frame;
  const czName = `cz_${frame}`;
  if (!hasColumn(src.table, czName)) throw new PeculiarError("column", `no ${czName} column to link galaxies in velocity`);
  const cz = float64Column(src.table, czName);
  const gs = plan.steps.groups;
  const h0 = plan.steps.velocities.h0;
  const o: FofOptions = { h0, scaling: gs.scaling, minMembers: gs.minMembers };
  if (gs.linkMpc !== undefined) o.d0Mpc = gs.linkMpc;
  if (gs.linkKmS !== undefined) o.v0KmS = gs.linkKmS;
  const fof = friendsOfFriends(src.raDeg, src.decDeg, cz, o);
  // Group distances from members with a trusted distance only.
  const rows = flowRowsOfTable(src.table, src.raDeg, src.decDeg, {}, src.file, true).rows;
  const dist = trustedDistances(rows);
  const g = groupTable({ groupId: fof.groupId, nGroups: fof.nGroups, raDeg: src.raDeg, decDeg: src.decDeg, czKmS: cz, distCMpc: dist, distFracErr: rows.distFracErr }, { h0, omegaM: plan.steps.velocities.omegaM });
  s.groups = g;
  const n = src.table.numRows;
  const meta = recordStep(new Map(src.table.schema.metadata), "groups", { ...fof.settings, velocityColumn: czName });
  const table = withColumns(
    src.table,
    [
      { name: "group_id", kind: "int32", values: fof.groupId, meta: { description: `friends-of-friends group (>= ${gs.minMembers} members), -1 none (as 'peculiar groups' writes it)`, ucd: "meta.id" } },
      { name: "group_size", kind: "int32", values: fof.groupSize, meta: { description: "members of the galaxy's friends-of-friends component (1 = isolated)" } },
    ],
    meta,
  );
  s.grouped = withTable(src, table);
  const outputs = [await saveTable(ctx.outDir, "05-groups.arrow", table), await saveTable(ctx.outDir, "05-groups-table.arrow", groupsTableArrow(g))];
  s.finalName = await saveTable(ctx.outDir, "final.arrow", table);
  s.finalTable = table;
  outputs.push(s.finalName);
  s.cluster = richestGroup(g, src.raDeg, src.decDeg, s);
  let inGroups = 0;
  for (let i = 0; i < n; i++) if (fof.groupId[i]! > 0) inGroups++;
  const c = s.cluster;
  return {
    outputs,
    numbers: {
      groups: fof.nGroups,
      galaxiesInGroups: inGroups,
      settings: fof.settings,
      richest: c ? { groupId: c.groupId, members: c.members, raDeg: c.raDeg, decDeg: c.decDeg, czKmS: c.czKmS, czErrKmS: c.czErrKmS, sigmaRestKmS: c.sigmaKmS, distCMpc: c.distCMpc, distCErrMpc: c.distCErrMpc } : null,
    },
  };
}
