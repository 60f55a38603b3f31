/**
 * `peculiar flow IN [--json] [--max-dist D]`: H0 and the bulk flow from here (src/flow/bulkflow.ts).
 * Outliers (outlier = true) and invalid rows are left out. With -o, writes the table with each row's
 * residual and whether it entered the fit.
 */
import type { Command } from "../command.js";
import { COMMON_FLAGS, numberFlag, parseFlags, h0Flag, omegaMFlag } from "../command.js";
import { PeculiarError, usageError } from "../../errors.js";
import { assertOutputs, writeTable } from "../../catalogue/io.js";
import { withColumns } from "../../catalogue/columns.js";
import { recordStep } from "../../catalogue/meta.js";
import { DEFAULT_COSMOLOGY } from "../../cosmology/distances.js";
import { fitFlow, whyNotFitted, type FlowOptions, type FlowRows } from "../../flow/bulkflow.js";
import { flowRowsOfTable, splitFlowColumns } from "../../flow/table.js";
import { CATALOGUE_FLAGS, CATALOGUE_FLAGS_HELP, loadForCommand, parseCatalogueFlags } from "../catalogue-flags.js";

const help = `usage: peculiar flow IN [--json] [--max-dist D] [options]

Fits H0 (the monopole) and the bulk flow (the dipole) of the velocity field seen from here, by weighted
least squares (Kaiser 1988 maximum likelihood; weights 1/(err^2 + sigma*^2)) with the full covariance.
The fit works in ln D (errors Gaussian for log-normal distance errors, Watkins & Feldman 2015) and
iterates H0 to a fixed point. Rows flagged outlier and invalid rows are left out.

Reads cz_cmb, dist_c_mpc, dist_c_err_mpc (from 'peculiar velocities'), outlier (from 'peculiar flag').

--json prints { h0 {value, error}, bulk_flow {vx, vy, vz (Galactic Cartesian, km/s), amplitude,
amplitude_err, l, b, sgl, sgb, cov (3 x 3, (km/s)^2)}, n_used, settings }.
The amplitude is biased high when it is not well above its error (|B| of a noisy vector).

options:
  --json                print the result as JSON on stdout (otherwise a short text summary)
  --max-dist D          only rows with redshift distance D_C(z_cmb) <= D Mpc (never cut on a noisy distance)
  --sigma-star S        non-linear velocity scatter, km/s (default 250)
  --h0 X                starting H0, km/s/Mpc (default ${DEFAULT_COSMOLOGY.h0})
  --omega-m X           flat LCDM matter density (default ${DEFAULT_COSMOLOGY.omegaM})
  --no-dipole           fit H0 alone (biased when the sky coverage is lopsided)
  --keep-outliers       use rows flagged outlier too
  -o, --output FILE     also write the table with flow_residual (km/s), flow_score and flow_used
  --col NAME=COLUMN     read flow input NAME (cz_cmb, dist_c_mpc, dist_c_err_mpc, outlier) from COLUMN
${CATALOGUE_FLAGS_HELP}
`;

const command: Command = {
  name: "flow",
  summary: "fit H0 and the bulk flow",
  help,
  async run(argv, io) {
    const { values, positionals } = parseFlags(
      argv,
      {
        ...COMMON_FLAGS,
        ...CATALOGUE_FLAGS,
        output: { type: "string", short: "o" },
        json: { type: "boolean" },
        "max-dist": { type: "string" },
        "sigma-star": { type: "string" },
        h0: { type: "string" },
        "omega-m": { type: "string" },
        "no-dipole": { type: "boolean" },
        "keep-outliers": { type: "boolean" },
      },
      "flow",
    );
    if (positionals.length !== 1) throw usageError("flow needs one input file; see 'peculiar flow --help'", { value: positionals });
    const input = positionals[0]!;
    assertOutputs([input], [values.output]);
    const sigmaStar = numberFlag(values["sigma-star"], "sigma-star", 250, (x) => x >= 0, "a number >= 0 km/s");
    const h0 = h0Flag(values.h0);
    const omegaM = omegaMFlag(values["omega-m"]);
    const maxDist = values["max-dist"] === undefined ? undefined : numberFlag(values["max-dist"], "max-dist", 0, (x) => x > 0, "a distance > 0 Mpc");
    const { names, rest } = splitFlowColumns(values.col);
    const flags = parseCatalogueFlags({ ...values, col: rest });
    const cat = await loadForCommand(input, flags, io, { require: ["ra", "dec"] });
    const t = flowRowsOfTable(cat.table, cat.raDeg, cat.decDeg, names, cat.file, !values["keep-outliers"]);
    const fitDipole = !values["no-dipole"];
    const fitOpts = { cosmology: { h0, omegaM }, sigmaStar, fitDipole, ...(maxDist !== undefined ? { maxDistMpc: maxDist } : {}) };
    const f = fitFlow(t.rows, fitOpts);
    const settings = {
      sigma_star: sigmaStar,
      h0_start: h0,
      omega_m: omegaM,
      max_dist_mpc: maxDist ?? null,
      fit_dipole: fitDipole,
      outliers_left_out: !values["keep-outliers"],
      n_outliers_left_out: values["keep-outliers"] ? 0 : t.nOutliers,
      n_invalid_left_out: cat.table.numRows - t.nValid,
      frame: "Galactic Cartesian (x to l = 0, y to l = 90, z to the NGP)",
      distance: "comoving (dist_c_mpc)",
      estimator: "log-distance maximum likelihood (Watkins & Feldman 2015 form), H0 iterated",
      chi2: f.chi2,
      dof: f.dof,
      residual_rms_kms: f.residualRms,
    };
    const cov: number[][] = [0, 1, 2].map((a) => [0, 1, 2].map((c) => f.bulkCov[a * 3 + c]!));
    const result = {
      h0: { value: f.h0, error: f.h0Err },
      bulk_flow: fitDipole
        ? { vx: f.bulkGal[0], vy: f.bulkGal[1], vz: f.bulkGal[2], amplitude: f.amplitude, amplitude_err: f.amplitudeErr, l: f.lDeg, b: f.bDeg, sgl: f.sglDeg, sgb: f.sgbDeg, cov }
        : null,
      n_used: f.nUsed,
      settings,
    };
    if (!f.ok) {
      throw new PeculiarError(
        "input",
        `the fit failed with ${f.nUsed} usable rows: ${fitDipole ? "H0 and a bulk flow need galaxies spread over the sky (more than 4, not all on one plane or line of sight; --no-dipole fits H0 alone)" : "H0 needs at least 2 usable galaxies"}`,
        { file: cat.file },
      );
    }
    io.note(`flow: ${f.nUsed} of ${cat.table.numRows} rows used (${settings.n_outliers_left_out} outliers and ${settings.n_invalid_left_out} invalid left out), chi2/dof = ${(f.chi2 / f.dof).toFixed(2)}`);
    const left = leftOut(t.rows, t.use, f.used, fitOpts);
    if (left.length > 0) io.note(`flow: valid rows also left out of the fit: ${left.join(", ")}`);
    if (values.output) {
      const n = cat.table.numRows;
      const score = new Float64Array(n);
      for (let i = 0; i < n; i++) score[i] = f.residual[i]! / f.sigmaTotal[i]!;
      const table = withColumns(
        cat.table,
        [
          { name: "flow_residual", kind: "float64", values: f.residual, meta: { unit: "km/s", description: "residual from the fitted H0 + bulk flow (log-distance form)" } },
          { name: "flow_score", kind: "float64", values: score, meta: { description: "flow_residual / sqrt(err^2 + sigma*^2)" } },
          { name: "flow_used", kind: "bool", values: f.used, meta: { description: "row entered the fit" } },
        ],
        recordStep(new Map(cat.table.schema.metadata), "flow", { ...settings, h0: f.h0, h0_err: f.h0Err, bulk_flow_gal: f.bulkGal }),
      );
      await writeTable(table, values.output, flags.outFormat !== undefined ? { format: flags.outFormat } : {});
      io.note(`wrote ${values.output}`);
    }
    if (values.json) io.stdout.write(JSON.stringify(result, null, 2) + "\n");
    else {
      const lines = [`H0 = ${f.h0.toFixed(2)} +- ${f.h0Err.toFixed(2)} km/s/Mpc (${f.nUsed} galaxies)`];
      if (fitDipole)
        lines.push(
          `bulk flow = ${f.amplitude.toFixed(0)} +- ${f.amplitudeErr.toFixed(0)} km/s toward (l, b) = (${f.lDeg.toFixed(1)}, ${f.bDeg.toFixed(1)}) deg, (SGL, SGB) = (${f.sglDeg.toFixed(1)}, ${f.sgbDeg.toFixed(1)}) deg`,
          `  Galactic (vx, vy, vz) = (${f.bulkGal.map((x, i) => `${x.toFixed(0)} +- ${Math.sqrt(f.bulkCov[4 * i]!).toFixed(0)}`).join(", ")}) km/s`,
        );
      io.stdout.write(lines.join("\n") + "\n");
    }
    return 0;
  },
};
/** The rows offered (`use`) that the fit did not take, counted by why: "2 no usable distance error (dist_c_err_mpc)", ... */
function leftOut(rows: FlowRows, use: Uint8Array, used: Uint8Array, opts: FlowOptions): string[] {
  const by = new Map<string, number>();
  for (let i = 0; i < use.length; i++) {
    if (!use[i] || used[i]) continue;
    const why = whyNotFitted(rows, i, opts);
    by.set(why, (by.get(why) ?? 0) + 1);
  }
  return [...by].map(([why, k]) => `${k} ${why}`);
}

export default command;
