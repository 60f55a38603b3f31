/**
 * `peculiar recentre IN --on ID|RA,DEC,DIST|group:ID`: the velocity field seen from another galaxy, point
 * or group (src/flow/recentre.ts), the Copernican check (src/flow/copernican.ts) and, with --infall, the
 * infall profile in the origin's rest frame (src/flow/infall.ts).
 */
import type { Command } from "../command.js";
import { COMMON_FLAGS, numberFlag, parseFlags, h0Flag, omegaMFlag } from "../command.js";
import { PeculiarError, usageError } from "../../errors.js";
import { assertOutputs, writeTable } from "../../catalogue/io.js";
import { float64Column, hasColumn, stringColumn, withColumns } from "../../catalogue/columns.js";
import { recordStep } from "../../catalogue/meta.js";
import { sourceRows } from "../../catalogue/validity.js";
import { DEFAULT_COSMOLOGY, type Cosmology } from "../../cosmology/distances.js";
import { lonLatOf } from "../../sky/vectors.js";
import { fitFlow, flowPoints, trustedDistances } from "../../flow/bulkflow.js";
import { recentre, type RecentreOrigin, type Recentred } from "../../flow/recentre.js";
import { copernicanCheck } from "../../flow/copernican.js";
import { groupTable } from "../../flow/groups.js";
import { excludeMembers, groupOrigin, pointOrigin, richestGroup } from "../../flow/origins.js";
import { infallProfile } from "../../flow/infall.js";
import { columnName, flowRowsOfTable, splitFlowColumns } from "../../flow/table.js";
import { CATALOGUE_FLAGS, CATALOGUE_FLAGS_HELP, loadForCommand, parseCatalogueFlags } from "../catalogue-flags.js";

const RADIAL_ONLY =
  "radial-only: each galaxy's 3-D velocity is its Hubble flow plus its radial peculiar velocity (H0 D + v_pec along the line of sight from us); tangential peculiar velocities are unknown and taken as zero";

const help = `usage: peculiar recentre IN --on ID|RA,DEC,DIST|group:ID [--h0 H] [-o OUT] [--json] [options]

The velocity field seen from another origin: a galaxy of the catalogue (its id), a point (RA, Dec in
degrees ICRS and comoving distance in Mpc, at rest in the Hubble flow unless --origin-vpec), or a group
from 'peculiar groups' (group:ID, at the group's centroid, distance and peculiar velocity).
Positions are comoving (dist_c_mpc); velocities are ${RADIAL_ONLY}.
Seen from the origin, v_AB = (v_B - v_A) . e_AB, and the Hubble law is fitted jointly with a dipole (the
origin's own motion shows as a dipole; fitting H0 alone would alias it into H0 on a lopsided survey).
The same fit from here gives h0_here; the Copernican verdict compares the two:
consistent |z| <= 2, tension 2 < |z| <= 3, inconsistent |z| > 3 (z = (H_there - H_here)/sigma).

--json prints origin, h0_here {value, error}, h0_there {value, error}, dipole_here and dipole_there
{vx, vy, vz (Galactic Cartesian, km/s), amplitude, l, b, err}, residual_scatter {here, there} (km/s),
n_used {here, there}, copernican {verdict, delta_h0, delta_h0_err, z, scatter_ratio}, velocity_model,
settings, and with --infall the profile.

options:
  --on WHERE            ID (or id:ID) | RA,DEC,DIST | group:ID | group:richest  (required)
  --h0 X                H0 for positions, velocities and the infall profile, km/s/Mpc
                        (default: the value fitted from here)
  --omega-m X           flat LCDM matter density (default ${DEFAULT_COSMOLOGY.omegaM})
  --sigma-star S        non-linear velocity scatter, km/s (default 250)
  --max-dist D          use galaxies within D Mpc of each origin
  --form F              minor (default): (v_B - v_A) . e_AB; major: (V_B - V_A cos theta)/cos lambda
                        (its H0 there is biased low by distance errors: judge the Copernican check
                        with the minor form)
  --origin-vpec V       point origin only: its radial peculiar velocity, km/s (default 0)
  --infall EDGES        infall profile: comma-separated bin edges in Mpc from the origin (major-infall form)
  --keep-outliers       use rows flagged outlier too
  -o, --output FILE     the table with recentre_s_mpc, recentre_v_kms, recentre_v_pec_kms, recentre_used
  --json                print the result as JSON on stdout
  --col NAME=COLUMN     read flow input NAME (cz_cmb, dist_c_mpc, dist_c_err_mpc, outlier, group_id) from COLUMN
${CATALOGUE_FLAGS_HELP}
`;

interface OriginInfo {
  kind: "row" | "point" | "group";
  label: string;
  origin: RecentreOrigin;
  raDeg: number;
  decDeg: number;
  distMpc: number;
  vrKmS: number;
  index: number;
}

function dipoleJson(r: Recentred) {
  const [vx, vy, vz] = r.dipole;
  const amp = Math.hypot(vx, vy, vz);
  const [l, b] = amp > 0 ? lonLatOf(vx, vy, vz) : [NaN, NaN];
  return { vx, vy, vz, amplitude: amp, l, b, err: r.dipoleErr };
}

const command: Command = {
  name: "recentre",
  summary: "the velocity field seen from another galaxy, group or point",
  help,
  async run(argv, io) {
    const { values, positionals } = parseFlags(
      argv,
      {
        ...COMMON_FLAGS,
        ...CATALOGUE_FLAGS,
        on: { type: "string" },
        h0: { type: "string" },
        "omega-m": { type: "string" },
        "sigma-star": { type: "string" },
        "max-dist": { type: "string" },
        form: { type: "string" },
        "origin-vpec": { type: "string" },
        infall: { type: "string" },
        "keep-outliers": { type: "boolean" },
        output: { type: "string", short: "o" },
        json: { type: "boolean" },
      },
      "recentre",
    );
    if (positionals.length !== 1) throw usageError("recentre needs one input file; see 'peculiar recentre --help'", { value: positionals });
    const input = positionals[0]!;
    assertOutputs([input], [values.output]);
    const on = values.on;
    if (!on) throw usageError("recentre needs --on ID|RA,DEC,DIST|group:ID");
    const omegaM = omegaMFlag(values["omega-m"]);
    const sigmaStar = numberFlag(values["sigma-star"], "sigma-star", 250, (x) => x >= 0, "a number >= 0 km/s");
    const maxDist = values["max-dist"] === undefined ? undefined : numberFlag(values["max-dist"], "max-dist", 0, (x) => x > 0, "a distance > 0 Mpc");
    const form = values.form ?? "minor";
    if (form !== "minor" && form !== "major") throw usageError("bad value for --form", { value: form, expected: "minor or major" });
    const edges = values.infall === undefined ? undefined : Float64Array.from(values.infall.split(",").map((x) => Number(x)));
    if (edges && (edges.length < 2 || edges.some((x, i) => !Number.isFinite(x) || x < 0 || (i > 0 && !(x > edges[i - 1]!))))) {
      throw usageError("bad value for --infall", { value: values.infall, expected: "increasing bin edges in Mpc, e.g. 0,2,4,8,16" });
    }
    const { names, rest } = splitFlowColumns(values.col);
    const flags = parseCatalogueFlags({ ...values, col: rest });
    const cat = await loadForCommand(input, flags, io, { require: ["ra", "dec"] });
    const t = flowRowsOfTable(cat.table, cat.raDeg, cat.decDeg, names, cat.file, !values["keep-outliers"]);
    const use = new Uint8Array(t.use);
    for (let i = 0; i < use.length; i++) if (!(t.rows.distCMpc[i]! > 0) || !Number.isFinite(t.rows.czCmbKmS[i]!)) use[i] = 0;

    let h0: number;
    if (values.h0 !== undefined) h0 = h0Flag(values.h0, 70);
    else {
      const f = fitFlow({ ...t.rows, use }, { cosmology: { h0: DEFAULT_COSMOLOGY.h0, omegaM }, sigmaStar });
      h0 = Number.isFinite(f.h0) ? f.h0 : DEFAULT_COSMOLOGY.h0;
    }
    const cosmo: Cosmology = { h0, omegaM };
    const pts = flowPoints(t.rows, cosmo);
    const o = resolveOrigin(on, cat, t, names, cosmo, pts, use, values["origin-vpec"]);
    const opts = { h0, sigmaStar, form: form as "minor" | "major", ...(maxDist !== undefined ? { maxDistMpc: maxDist } : {}) };
    const points = { ...pts, use };
    const here = recentre(points, { x: 0, y: 0, z: 0, vr: 0 }, opts);
    const there = recentre(points, o.origin, opts);
    const cop = copernicanCheck({ h0: here.h0There, err: here.h0ThereErr, rms: here.residualRmsThere }, { h0: there.h0There, err: there.h0ThereErr, rms: there.residualRmsThere });
    const profile = edges ? infallProfile(points, o.origin, { h0, edgesMpc: edges }) : undefined;
    const settings = {
      h0_reference: h0,
      h0_from: values.h0 !== undefined ? "--h0" : "fit from here",
      omega_m: omegaM,
      sigma_star: sigmaStar,
      max_dist_mpc: maxDist ?? null,
      form,
      estimator_here: here.estimator,
      estimator_there: there.estimator,
      frame: "Galactic Cartesian (x to l = 0, y to l = 90, z to the NGP), comoving Mpc",
      outliers_left_out: !values["keep-outliers"],
    };
    const result: Record<string, unknown> = {
      origin: { kind: o.kind, on: o.label, ra: o.raDeg, dec: o.decDeg, dist_mpc: o.distMpc, vr_kms: o.vrKmS, row: o.index >= 0 ? o.index + 1 : null, source_row: o.index >= 0 ? sourceRows(cat.table)[o.index]! : null },
      h0_here: { value: here.h0There, error: here.h0ThereErr },
      h0_there: { value: there.h0There, error: there.h0ThereErr },
      dipole_here: dipoleJson(here),
      dipole_there: dipoleJson(there),
      residual_scatter: { here: here.residualRmsThere, there: there.residualRmsThere },
      n_used: { here: here.nUsed, there: there.nUsed },
      copernican: {
        verdict: cop.verdict,
        delta_h0: cop.dH,
        delta_h0_err: cop.dHErr,
        z: cop.z,
        scatter_ratio: cop.scatterRatio,
        note: form === "major" ? MAJOR_NOTE : "errors from another origin were ~30% too small on mocks with 18% distance errors and a 380 km/s bulk flow (radial-only velocities)",
      },
      velocity_model: RADIAL_ONLY,
      settings,
    };
    if (profile) {
      result.infall = Array.from(profile.n, (nk, k) => ({
        r_min_mpc: edges![k],
        r_max_mpc: edges![k + 1],
        n: nk,
        r_mean_mpc: profile.rMeanMpc[k],
        v_mean_kms: profile.vMeanKmS[k],
        v_err_kms: profile.vErrKmS[k],
        v_median_kms: profile.vMedianKmS[k],
      }));
    }
    io.note(`recentre: origin ${o.kind} ${o.label} at (RA, Dec) = (${o.raDeg.toFixed(4)}, ${o.decDeg.toFixed(4)}) deg, D = ${o.distMpc.toFixed(2)} Mpc; ${there.nUsed} galaxies seen from there, ${here.nUsed} from here`);
    io.note(`  velocities are ${RADIAL_ONLY}`);
    if (values.output) {
      const n = cat.table.numRows;
      const vp = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        const s = there.s[i]!;
        // direction from the origin, for the dipole term
        const ex = (pts.x[i]! - there.origin.x) / s;
        const ey = (pts.y[i]! - there.origin.y) / s;
        const ez = (pts.z[i]! - there.origin.z) / s;
        vp[i] = there.vAB[i]! - there.h0There * s - (there.dipole[0] * ex + there.dipole[1] * ey + there.dipole[2] * ez);
      }
      const table = withColumns(
        cat.table,
        [
          { name: "recentre_s_mpc", kind: "float64", values: there.s, meta: { unit: "Mpc", description: `comoving distance from the origin ${o.label}` } },
          { name: "recentre_v_kms", kind: "float64", values: there.vAB, meta: { unit: "km/s", description: `radial velocity seen from ${o.label} (${form} form, ${RADIAL_ONLY})` } },
          { name: "recentre_v_pec_kms", kind: "float64", values: vp, meta: { unit: "km/s", description: "recentre_v_kms minus the Hubble law and dipole fitted from there" } },
          { name: "recentre_used", kind: "bool", values: there.used, meta: { description: "row offered to the fit from there (n_used counts those fitted: a line of sight without a ln D root is offered, not fitted)" } },
        ],
        recordStep(new Map(cat.table.schema.metadata), "recentre", { ...settings, origin: result.origin, h0_there: there.h0There }),
      );
      await writeTable(table, values.output, flags.outFormat !== undefined ? { format: flags.outFormat } : {});
      io.note(`wrote ${values.output}`);
    }
    if (values.json) io.stdout.write(JSON.stringify(result, null, 2) + "\n");
    else {
      const lines = [
        `H0 here  = ${here.h0There.toFixed(2)} +- ${here.h0ThereErr.toFixed(2)} km/s/Mpc, residual scatter ${here.residualRmsThere.toFixed(0)} km/s (${here.nUsed} galaxies)`,
        `H0 there = ${there.h0There.toFixed(2)} +- ${there.h0ThereErr.toFixed(2)} km/s/Mpc, residual scatter ${there.residualRmsThere.toFixed(0)} km/s (${there.nUsed} galaxies)`,
        `dipole seen from there: ${Math.hypot(...there.dipole).toFixed(0)} km/s, Galactic (${there.dipole.map((x) => x.toFixed(0)).join(", ")})`,
        `Copernican check: ${cop.verdict} (H0 there - here = ${cop.dH.toFixed(2)} +- ${cop.dHErr.toFixed(2)}, z = ${cop.z.toFixed(2)}; scatter ratio ${cop.scatterRatio.toFixed(2)})`,
        ...(form === "major" ? [`  note: ${MAJOR_NOTE}`] : []),
      ];
      if (profile) {
        lines.push("infall profile (r in Mpc from the origin, mean radial peculiar velocity relative to it, km/s):");
        for (let k = 0; k < profile.n.length; k++)
          lines.push(`  ${edges![k]}-${edges![k + 1]}  n = ${profile.n[k]}  r = ${profile.rMeanMpc[k]!.toFixed(2)}  v = ${profile.vMeanKmS[k]!.toFixed(0)} +- ${profile.vErrKmS[k]!.toFixed(0)}`);
      }
      io.stdout.write(lines.join("\n") + "\n");
    }
    return 0;
  },
};
/**
 * Why the Copernican verdict of the major form is not to be trusted: its fit is linear in the
 * velocity, and dividing by cos lambda and by noisy distances biases H0 there low. Measured here:
 * pure-Hubble mocks (makeMockUniverse seeds 1-3, 1500 galaxies, 15 % distance errors, no bulk flow),
 * origins at (20, -40, 100), (150, 30, 60), (250, 10, 80): minor form consistent at 9 of 9
 * (|z| <= 0.53), major form inconsistent at 9 of 9 (z from -3.2 to -10.3).
 */
const MAJOR_NOTE = "the major form's fit is biased by distance errors (on pure-Hubble mocks with 15 % errors it read 'inconsistent' at 9 of 9 origins, the minor form 'consistent' at 9 of 9): judge the Copernican check with the minor form";

export default command;

function resolveOrigin(
  on: string,
  cat: Awaited<ReturnType<typeof loadForCommand>>,
  t: ReturnType<typeof flowRowsOfTable>,
  names: ReturnType<typeof splitFlowColumns>["names"],
  cosmo: Cosmology,
  pts: ReturnType<typeof flowPoints>,
  use: Uint8Array,
  originVpec: string | undefined,
): OriginInfo {
  const g = /^group:(.+)$/.exec(on);
  if (g) {
    const gname = columnName(names, "group_id");
    if (!hasColumn(cat.table, gname)) throw new PeculiarError("column", `--on ${on}: no column ${gname}; run 'peculiar groups' first`, { file: cat.file, column: gname });
    const gid = Int32Array.from(float64Column(cat.table, gname), (x) => (Number.isFinite(x) ? x : -1));
    let nG = 0;
    for (let i = 0; i < gid.length; i++) nG = Math.max(nG, gid[i]!);
    // the group's distance from members with a trusted distance (valid, and not outliers unless
    // --keep-outliers), as 'groups' and 'run' place it
    const gt = groupTable({ groupId: gid, nGroups: nG, raDeg: cat.raDeg, decDeg: cat.decDeg, czKmS: t.rows.czCmbKmS, distCMpc: trustedDistances(t.rows), distFracErr: t.rows.distFracErr }, cosmo);
    let k: number;
    if (g[1] === "richest") {
      k = richestGroup(gt);
      if (k < 0) throw new PeculiarError("input", `--on ${on}: the catalogue has no groups`, { file: cat.file, column: gname });
    } else {
      const id = Number(g[1]);
      if (!Number.isInteger(id) || id < 1) throw usageError(`--on ${on}: a group id is a whole number >= 1 (or richest)`);
      if (id > nG) throw new PeculiarError("input", `--on ${on}: no such group`, { file: cat.file, column: gname, value: id, expected: `1..${nG}` });
      k = id - 1;
      if (gt.nMembers[k] === 0) throw new PeculiarError("input", `--on ${on}: the group has no members`, { file: cat.file, column: gname });
    }
    const o = groupOrigin(gt, k, cosmo);
    // the members are part of the origin: they do not enter the fit from there
    excludeMembers(gt, k, use);
    return { kind: "group", label: on, origin: { x: o.x, y: o.y, z: o.z, vr: o.vr }, raDeg: gt.raDeg[k]!, decDeg: gt.decDeg[k]!, distMpc: o.distMpc, vrKmS: o.vr, index: -1 };
  }
  const p = on.split(",");
  if (p.length === 3) {
    const [ra, dec, d] = p.map((s) => Number(s.trim())) as [number, number, number];
    // the same ranges as a catalogue's positions (load.ts): RA in [0, 360), Dec in [-90, 90]
    if (!(ra >= 0 && ra < 360 && Math.abs(dec) <= 90 && d > 0 && d < Infinity)) {
      throw usageError(`--on ${on}: expected RA,DEC,DIST with RA in [0, 360) and Dec in [-90, 90] degrees and a distance > 0 Mpc`);
    }
    const vpec = numberFlag(originVpec, "origin-vpec", 0);
    const o = pointOrigin(ra, dec, d, cosmo.h0, vpec);
    return { kind: "point", label: on, origin: { x: o.x, y: o.y, z: o.z, vr: o.vr }, raDeg: ra, decDeg: dec, distMpc: d, vrKmS: o.vr, index: -1 };
  }
  const idCol = cat.roles.id;
  if (!idCol) throw new PeculiarError("column", `--on ${on}: the catalogue has no id column to look the galaxy up in; name it with --col id=NAME or give RA,DEC,DIST`, { file: cat.file });
  const ids = stringColumn(cat.table, idCol);
  const want = on.replace(/^id:/, "").trim();
  const hits: number[] = [];
  for (let i = 0; i < ids.length; i++) if ((ids[i] ?? "").trim() === want) hits.push(i);
  if (hits.length === 0) throw new PeculiarError("input", `--on ${on}: no row has this id`, { file: cat.file, column: idCol, value: on });
  if (hits.length > 1) {
    const src = sourceRows(cat.table);
    throw new PeculiarError("input", `--on ${on}: ${hits.length} rows have this id (source rows ${hits.slice(0, 5).map((h) => src[h]!).join(", ")}${hits.length > 5 ? ", ..." : ""}); dedupe first`, { file: cat.file, column: idCol });
  }
  const i = hits[0]!;
  if (!(t.rows.distCMpc[i]! > 0) || !Number.isFinite(pts.vr[i]!)) {
    throw new PeculiarError("input", `--on ${on}: this galaxy (source row ${sourceRows(cat.table)[i]}) has no usable distance or redshift`, { file: cat.file, row: i + 1, column: columnName(names, "dist_c_mpc") });
  }
  const d = t.rows.distCMpc[i]!;
  return { kind: "row", label: on, origin: { index: i }, raDeg: cat.raDeg[i]!, decDeg: cat.decDeg[i]!, distMpc: d, vrKmS: pts.vr[i]!, index: i };
}
