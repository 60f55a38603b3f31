/**
 * `peculiar flag IN -o OUT`: flags outlier peculiar velocities around the fitted flow (src/flow/outliers.ts).
 * Adds outlier, outlier_score, outlier_reason; never deletes a row; --json prints a summary on stdout.
 */
import type { Command } from "../command.js";
import { COMMON_FLAGS, numberFlag, parseFlags, h0Flag, omegaMFlag } from "../command.js";
import { PeculiarError, usageError } from "../../errors.js";
import { assertOutputs, writeTable } from "../../catalogue/io.js";
import { withColumns, type ColumnData } from "../../catalogue/columns.js";
import { recordStep } from "../../catalogue/meta.js";
import { DEFAULT_COSMOLOGY } from "../../cosmology/distances.js";
import { flagOutliers, OUTLIER_CLIPPED, OUTLIER_UNSCORED, type OutlierMethod } from "../../flow/outliers.js";
import { whyNotFitted } from "../../flow/bulkflow.js";
import { flowRowsOfTable, splitFlowColumns } from "../../flow/table.js";
import { CATALOGUE_FLAGS, CATALOGUE_FLAGS_HELP, loadForCommand, parseCatalogueFlags } from "../catalogue-flags.js";

const help = `usage: peculiar flag IN -o OUT [options]

Flags outlier peculiar velocities. The model is the flow fitted from here (H0 scaling + bulk flow, as
'peculiar flow'); a row's score is its residual over sqrt(err^2 + sigma*^2), with the residual in the
log-distance form (Gaussian for log-normal distance errors). Rows are never deleted: outliers get
outlier = true, every scored row gets outlier_score, and outlier_reason says why (or why not scored).
Invalid rows are scored when possible but never flagged and never enter the fit.

Reads cz_cmb, dist_c_mpc, dist_c_err_mpc (written by 'peculiar velocities') and the positions.

options:
  -o, --output FILE     output table
  --method M            clip (default): iterative k-sigma clipping, refitting until the set is stable
                        mad: robust z = 0.6745 (r - median)/MAD (Iglewicz & Hoaglin 1993) instead of r
  --k K                 threshold (default 3.5)
  --sigma-star S        non-linear velocity scatter added to every error, km/s (default 250)
  --h0 X                starting H0 for the fit, km/s/Mpc (default ${DEFAULT_COSMOLOGY.h0}; the fit iterates away from it)
  --omega-m X           flat LCDM matter density (default ${DEFAULT_COSMOLOGY.omegaM})
  --max-dist D          fit only rows with redshift distance <= D Mpc (all rows are still scored)
  --json                print a summary object on stdout
  --col NAME=COLUMN     read flow input NAME (cz_cmb, dist_c_mpc, dist_c_err_mpc) from COLUMN
${CATALOGUE_FLAGS_HELP}
`;

const command: Command = {
  name: "flag",
  summary: "flag outlier peculiar velocities",
  help,
  async run(argv, io) {
    const { values, positionals } = parseFlags(
      argv,
      {
        ...COMMON_FLAGS,
        ...CATALOGUE_FLAGS,
        output: { type: "string", short: "o" },
        method: { type: "string" },
        k: { type: "string" },
        "sigma-star": { type: "string" },
        h0: { type: "string" },
        "omega-m": { type: "string" },
        "max-dist": { type: "string" },
        json: { type: "boolean" },
      },
      "flag",
    );
    if (positionals.length !== 1) throw usageError("flag needs one input file; see 'peculiar flag --help'", { value: positionals });
    const input = positionals[0]!;
    const output = values.output;
    if (!output) throw usageError("flag needs -o OUT");
    assertOutputs([input], [output]);
    const method = values.method ?? "clip";
    if (method !== "clip" && method !== "mad") throw usageError("bad value for --method", { value: method, expected: "clip or mad" });
    const k = numberFlag(values.k, "k", 3.5, (x) => x > 0, "a number > 0");
    const sigmaStar = numberFlag(values["sigma-star"], "sigma-star", 250, (x) => x >= 0, "a number >= 0 km/s");
    const h0 = h0Flag(values.h0);
    const omegaM = omegaMFlag(values["omega-m"]);
    const maxDist = values["max-dist"] === undefined ? undefined : numberFlag(values["max-dist"], "max-dist", 0, (x) => x > 0, "a distance > 0 Mpc");
    const { names, rest } = splitFlowColumns(values.col);
    const flags = parseCatalogueFlags({ ...values, col: rest });
    const cat = await loadForCommand(input, flags, io, { require: ["ra", "dec"] });
    const t = flowRowsOfTable(cat.table, cat.raDeg, cat.decDeg, names, cat.file, false);
    const test = { cosmology: { h0, omegaM }, ...(maxDist !== undefined ? { maxDistMpc: maxDist } : {}) };
    const res = flagOutliers(t.rows, { method: method as OutlierMethod, k, sigmaStar, ...test });
    const n = cat.table.numRows;
    const fit = res.fit;
    if (!fit.ok) {
      // no model, so no row can be scored: an error, not a table of "not scored" rows
      throw new PeculiarError("input", `the flow fit that outliers are scored against failed with ${fit.nUsed} usable rows (H0 and a bulk flow need more than 4 galaxies spread over the sky); nothing was flagged`, { file: cat.file });
    }
    const model = `model H0 = ${fit.h0.toFixed(2)} + bulk flow (${fit.bulkGal.map((x) => x.toFixed(0)).join(", ")}) km/s Galactic, sigma* = ${sigmaStar} km/s`;
    const reasons = new Array<string>(n);
    const scoreName = method === "mad" ? "robust z" : "|r|/sigma";
    for (let i = 0; i < n; i++) {
      const c = res.code[i]!;
      if (c === OUTLIER_CLIPPED) reasons[i] = `${scoreName} = ${Math.abs(res.score[i]!).toFixed(2)} > ${k} (${method}, iteration ${res.iteration[i]}; ${model})`;
      else if (c === OUTLIER_UNSCORED) reasons[i] = `not scored: ${whyNotFitted(t.rows, i, test)}`;
      else if (!t.use[i]) reasons[i] = Number.isFinite(res.score[i]!) ? "not flagged: invalid row (scored, left out of the fit)" : "not scored: invalid row";
      else reasons[i] = "";
    }
    const cols: ColumnData[] = [
      { name: "outlier", kind: "bool", values: res.outlier, meta: { description: `outlier of the fitted flow (${method}, k = ${k})` } },
      { name: "outlier_score", kind: "float64", values: res.score, meta: { description: method === "mad" ? "robust z of the normalised residual" : "normalised residual r / sqrt(err^2 + sigma*^2)", ucd: "stat.value" } },
      { name: "outlier_reason", kind: "utf8", values: reasons, meta: { description: "why the row is (or is not) flagged" } },
    ];
    const settings = { method, k, sigma_star: sigmaStar, h0_start: h0, omega_m: omegaM, max_dist_mpc: maxDist ?? null, h0_fit: fit.h0, bulk_flow_gal: fit.bulkGal, iterations: res.iterations, converged: res.converged };
    const table = withColumns(cat.table, cols, recordStep(new Map(cat.table.schema.metadata), "flag", settings));
    await writeTable(table, output, flags.outFormat !== undefined ? { format: flags.outFormat } : {});
    io.note(`flag: ${n} rows, ${res.nOutliers} outliers (${method}, k = ${k}, sigma* = ${sigmaStar} km/s), ${res.nUnscored} not scored, ${n - t.nValid} invalid left out; ${res.iterations} iterations${res.converged ? "" : " (not converged)"}`);
    io.note(`  ${model}; ${fit.nUsed} rows in the final fit`);
    io.note(`wrote ${output}`);
    if (values.json) {
      const summary = {
        n_rows: n,
        n_outliers: res.nOutliers,
        n_unscored: res.nUnscored,
        n_invalid: n - t.nValid,
        iterations: res.iterations,
        converged: res.converged,
        h0: { value: fit.h0, error: fit.h0Err },
        bulk_flow: { vx: fit.bulkGal[0], vy: fit.bulkGal[1], vz: fit.bulkGal[2] },
        settings,
      };
      io.stdout.write(JSON.stringify(summary, null, 2) + "\n");
    }
    return 0;
  },
};
export default command;
