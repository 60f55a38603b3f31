/**
 * `peculiar groups IN -o OUT [--groups-out FILE]`: friends-of-friends groups in redshift space
 * (src/flow/fof.ts) and the groups table (src/flow/groups.ts).
 */
import type { Command } from "../command.js";
import { COMMON_FLAGS, numberFlag, parseFlags, h0Flag, omegaMFlag } from "../command.js";
import { PeculiarError, usageError } from "../../errors.js";
import { assertOutputs, writeTable } from "../../catalogue/io.js";
import { hasColumn, tableFromColumns, withColumns, type ColumnData } from "../../catalogue/columns.js";
import { recordStep } from "../../catalogue/meta.js";
import { DEFAULT_COSMOLOGY } from "../../cosmology/distances.js";
import { convertPositions } from "../../sky/frames.js";
import { friendsOfFriends, type FofScaling } from "../../flow/fof.js";
import { groupTable } from "../../flow/groups.js";
import { columnName, flowRowsOfTable, splitFlowColumns } from "../../flow/table.js";
import { trustedDistances } from "../../flow/bulkflow.js";
import { float64Column } from "../../catalogue/columns.js";
import { CATALOGUE_FLAGS, CATALOGUE_FLAGS_HELP, loadForCommand, parseCatalogueFlags } from "../catalogue-flags.js";

const help = `usage: peculiar groups IN -o OUT [--groups-out FILE] [options]

Finds friends-of-friends groups in redshift space (Huchra & Geller 1982): galaxies i, j are friends when
2 sin(theta/2) V/H0 <= D0 R(V) and |V_i - V_j| <= V0 R(V), V = (V_i + V_j)/2, with R(V) the HG82
luminosity-function scaling (R = 1 at V_f) or constant. Groups are the connected components.
Adds group_id (1, 2, ... for groups of at least --min-members; -1 otherwise) and group_size (size of the
friends-of-friends component, 1 for an isolated galaxy, 0 for an unusable row). A row is linked when it has a
usable position and cz_cmb, even if flagged for another reason (e.g. no distance); group distances
use only valid rows not flagged outlier.

The groups table has one row per group: group_id, n_members, ra, dec, l, b (centroid), cz_mean,
cz_mean_err, sigma_v (gapper, Beers et al. 1990), sigma_v_rest (/(1 + z)), r_proj_mpc (rms projected
radius), n_dist, dist_c_mpc and dist_c_err_mpc (inverse-variance mean of ln D), v_pec and v_pec_err
(exact form from the group's mean redshift and distance).

Reads cz_cmb (velocities for the links) and, when present, dist_c_mpc and dist_c_err_mpc.

options:
  -o, --output FILE     the input table with group_id and group_size
  --groups-out FILE     the groups table
  --scaling S           hg82 (default) or constant
  --d0 MPC              projected link at V_f, Mpc (default 0.52 h^-1 Mpc, HG82, from memory)
  --v0 KMS              velocity link at V_f, km/s (default 350, Ramella, Pisani & Geller 1997)
  --vf KMS              fiducial velocity where R = 1 (default 1000)
  --m-lim M             survey magnitude limit for the scaling (default 14.5)
  --m-star M            Schechter M* (default -19.2 + 5 log10 h)
  --alpha A             Schechter faint-end slope (default -1.1)
  --min-members N       smallest group that gets an id (default 3)
  --h0 X                km/s/Mpc (default ${DEFAULT_COSMOLOGY.h0})
  --omega-m X           flat LCDM matter density (default ${DEFAULT_COSMOLOGY.omegaM})
  --json                print a summary on stdout
  --col NAME=COLUMN     read flow input NAME (cz_cmb, dist_c_mpc, dist_c_err_mpc) from COLUMN
${CATALOGUE_FLAGS_HELP}
`;

const command: Command = {
  name: "groups",
  summary: "friends-of-friends groups in redshift space",
  help,
  async run(argv, io) {
    const { values, positionals } = parseFlags(
      argv,
      {
        ...COMMON_FLAGS,
        ...CATALOGUE_FLAGS,
        output: { type: "string", short: "o" },
        "groups-out": { type: "string" },
        scaling: { type: "string" },
        d0: { type: "string" },
        v0: { type: "string" },
        vf: { type: "string" },
        "m-lim": { type: "string" },
        "m-star": { type: "string" },
        alpha: { type: "string" },
        "min-members": { type: "string" },
        h0: { type: "string" },
        "omega-m": { type: "string" },
        json: { type: "boolean" },
      },
      "groups",
    );
    if (positionals.length !== 1) throw usageError("groups needs one input file; see 'peculiar groups --help'", { value: positionals });
    const input = positionals[0]!;
    const output = values.output;
    if (!output) throw usageError("groups needs -o OUT");
    assertOutputs([input], [output, values["groups-out"]]);
    const scaling = values.scaling ?? "hg82";
    if (scaling !== "hg82" && scaling !== "constant") throw usageError("bad value for --scaling", { value: scaling, expected: "hg82 or constant" });
    const h0 = h0Flag(values.h0);
    const omegaM = omegaMFlag(values["omega-m"]);
    const pos = (x: number) => x > 0;
    const o = {
      h0,
      scaling: scaling as FofScaling,
      ...(values.d0 !== undefined ? { d0Mpc: numberFlag(values.d0, "d0", 0, pos, "a length > 0 Mpc") } : {}),
      ...(values.v0 !== undefined ? { v0KmS: numberFlag(values.v0, "v0", 0, pos, "a velocity > 0 km/s") } : {}),
      ...(values.vf !== undefined ? { vFidKmS: numberFlag(values.vf, "vf", 0, pos, "a velocity > 0 km/s") } : {}),
      ...(values["m-lim"] !== undefined ? { mLim: numberFlag(values["m-lim"], "m-lim", 0) } : {}),
      ...(values["m-star"] !== undefined ? { mStar: numberFlag(values["m-star"], "m-star", 0) } : {}),
      ...(values.alpha !== undefined ? { alpha: numberFlag(values.alpha, "alpha", 0, (x) => x > -2, "a number > -2") } : {}),
      minMembers: numberFlag(values["min-members"], "min-members", 3, (x) => Number.isInteger(x) && x >= 2, "a whole number >= 2"),
    };
    const { names, rest } = splitFlowColumns(values.col);
    const flags = parseCatalogueFlags({ ...values, col: rest });
    const cat = await loadForCommand(input, flags, io, { require: ["ra", "dec"] });
    const n = cat.table.numRows;
    const czName = columnName(names, "cz_cmb");
    if (!hasColumn(cat.table, czName)) {
      throw new PeculiarError("column", `no column ${czName} (observed CMB-frame c z); run 'peculiar velocities' first or name it with --col cz_cmb=NAME`, { file: cat.file, column: czName });
    }
    const cz = float64Column(cat.table, czName);
    // Linking needs only a position and a velocity: a galaxy flagged for another reason (most often
    // "no usable distance": a survey galaxy no distance catalogue measured) is still linked. Rows
    // whose position or velocity is unusable have NaN there and stay out. Group distances below
    // come from members with a trusted distance only: valid, and not flagged outlier (as in 'run').
    const fof = friendsOfFriends(cat.raDeg, cat.decDeg, cz, o);
    const haveDist = hasColumn(cat.table, columnName(names, "dist_c_mpc")) && hasColumn(cat.table, columnName(names, "dist_c_err_mpc"));
    const rows = haveDist ? flowRowsOfTable(cat.table, cat.raDeg, cat.decDeg, names, cat.file, true).rows : undefined;
    const gt = groupTable(
      { groupId: fof.groupId, nGroups: fof.nGroups, raDeg: cat.raDeg, decDeg: cat.decDeg, czKmS: cz, ...(rows ? { distCMpc: trustedDistances(rows), distFracErr: rows.distFracErr } : {}) },
      { h0, omegaM },
    );
    const s = fof.settings;
    const settings = { ...s, velocity_column: czName, frame_of_positions: "ICRS" };
    const cols: ColumnData[] = [
      { name: "group_id", kind: "int32", values: fof.groupId, meta: { description: `friends-of-friends group (>= ${s.minMembers} members), -1 none`, ucd: "meta.id" } },
      { name: "group_size", kind: "int32", values: fof.groupSize, meta: { description: "members of the friends-of-friends component (1 isolated, 0 unusable)" } },
    ];
    const table = withColumns(cat.table, cols, recordStep(new Map(cat.table.schema.metadata), "groups", settings));
    await writeTable(table, output, flags.outFormat !== undefined ? { format: flags.outFormat } : {});
    if (values["groups-out"]) {
      const gal = convertPositions(gt.raDeg, gt.decDeg, "icrs", "galactic");
      const g: ColumnData[] = [
        { name: "group_id", kind: "int32", values: gt.id, meta: { ucd: "meta.id;meta.main" } },
        { name: "n_members", kind: "int32", values: gt.nMembers },
        { name: "ra", kind: "float64", values: gt.raDeg, meta: { unit: "deg", ucd: "pos.eq.ra;meta.main", description: "centroid" } },
        { name: "dec", kind: "float64", values: gt.decDeg, meta: { unit: "deg", ucd: "pos.eq.dec;meta.main", description: "centroid" } },
        { name: "l", kind: "float64", values: gal.lonDeg, meta: { unit: "deg", ucd: "pos.galactic.lon" } },
        { name: "b", kind: "float64", values: gal.latDeg, meta: { unit: "deg", ucd: "pos.galactic.lat" } },
        { name: "cz_mean", kind: "float64", values: gt.czMeanKmS, meta: { unit: "km/s", description: `mean ${czName} of the members` } },
        { name: "cz_mean_err", kind: "float64", values: gt.czMeanErrKmS, meta: { unit: "km/s", description: "sigma_v / sqrt(n)" } },
        { name: "sigma_v", kind: "float64", values: gt.sigmaKmS, meta: { unit: "km/s", description: "gapper velocity dispersion (Beers, Flynn & Gebhardt 1990), observed" } },
        { name: "sigma_v_rest", kind: "float64", values: gt.sigmaRestKmS, meta: { unit: "km/s", description: "sigma_v / (1 + z_mean), rest frame" } },
        { name: "r_proj_mpc", kind: "float64", values: gt.rProjMpc, meta: { unit: "Mpc", description: "rms projected radius about the centroid at cz_mean / H0" } },
        { name: "n_dist", kind: "int32", values: gt.nDist, meta: { description: "members with a distance" } },
        { name: "dist_c_mpc", kind: "float64", values: gt.distCMpc, meta: { unit: "Mpc", description: "inverse-variance mean of ln D_C of the members" } },
        { name: "dist_c_err_mpc", kind: "float64", values: gt.distCErrMpc, meta: { unit: "Mpc" } },
        { name: "v_pec", kind: "float64", values: gt.vPecKmS, meta: { unit: "km/s", description: "c (z_mean - z_cos)/(1 + z_cos) of the group" } },
        { name: "v_pec_err", kind: "float64", values: gt.vPecErrKmS, meta: { unit: "km/s" } },
      ];
      const meta = recordStep(new Map(), "groups", settings);
      await writeTable(tableFromColumns(g, meta, gt.nGroups), values["groups-out"], flags.outFormat !== undefined ? { format: flags.outFormat } : {});
    }
    let grouped = 0;
    for (let i = 0; i < n; i++) if (fof.groupId[i]! > 0) grouped++;
    let largest = 0;
    for (let k = 0; k < gt.nGroups; k++) largest = Math.max(largest, gt.nMembers[k]!);
    io.note(
      `groups: ${n} rows, ${fof.nGroups} groups of >= ${s.minMembers} members holding ${grouped} galaxies (largest ${largest}); ` +
        `D0 = ${s.d0Mpc.toFixed(3)} Mpc, V0 = ${s.v0KmS} km/s, scaling ${s.scaling}${s.scaling === "hg82" ? ` (V_f = ${s.vFidKmS}, m_lim = ${s.mLim}, M* = ${s.mStar.toFixed(2)}, alpha = ${s.alpha})` : ""}`,
    );
    // rows friends-of-friends could not link (group_size 0): said, and counted by why
    let noPos = 0;
    let noCz = 0;
    let blue = 0;
    for (let i = 0; i < n; i++) {
      if (fof.groupSize[i] !== 0) continue;
      if (!Number.isFinite(cat.raDeg[i]! + cat.decDeg[i]!)) noPos++;
      else if (!Number.isFinite(cz[i]!)) noCz++;
      else blue++;
    }
    // percolation: one component holding a large part of the sample means the links are too long
    const linked = n - (noPos + noCz + blue);
    if (linked >= 100 && largest > PERCOLATION_FRACTION * linked) {
      io.note(
        `groups: the largest group holds ${largest} of the ${linked} linked galaxies (${((100 * largest) / linked).toFixed(0)} %): the linking lengths are likely too long for this sample ` +
          `(${s.scaling === "hg82" ? "the HG82 scaling grows them with distance; try --scaling constant, or " : "try "}a smaller --d0 / --v0)`,
      );
    }
    if (noPos + noCz + blue > 0) {
      const counts: [number, string][] = [[noPos, "no usable position"], [noCz, `no ${czName}`], [blue, `${czName} <= 0 (no Hubble distance to link at)`]];
      const parts = counts.filter(([k]) => k > 0).map(([k, why]) => `${k} ${why}`);
      io.note(`groups: ${noPos + noCz + blue} rows not linked (group_size 0): ${parts.join(", ")}`);
    }
    io.note(`wrote ${output}${values["groups-out"] ? ` and ${values["groups-out"]}` : ""}`);
    if (values.json) io.stdout.write(JSON.stringify({ n_rows: n, n_groups: fof.nGroups, n_grouped: grouped, n_not_linked: noPos + noCz + blue, largest, settings }, null, 2) + "\n");
    return 0;
  },
};
/** A group with more than this fraction of the linked galaxies is reported as a sign of percolation (common practice: real groups hold a few per cent at most). */
const PERCOLATION_FRACTION = 0.2;

export default command;
