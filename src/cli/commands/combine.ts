/**
 * `peculiar combine IN -o OUT --mu a_mu,b_mu`: zero-point offsets between distance catalogues from
 * the galaxies they share, applied on request, and one inverse-variance modulus per galaxy
 * (src/cosmology/combine.ts). The offsets go to stdout as JSON (or --report FILE), counts to stderr.
 */
import type { Command } from "../command.js";
import { COMMON_FLAGS, numberFlag, parseFlags } from "../command.js";
import { usageError } from "../../errors.js";
import { assertOutputs, parseFormatName, readTable, writeFileAtomic, writeTable } from "../../catalogue/io.js";
import { combineDistances, type CombineOptions } from "../../cosmology/combine.js";

const help = `usage: peculiar combine IN -o OUT --mu COL,COL[,...] [options]

Harmonises the zero points of distance catalogues and combines their distance moduli. IN is a
table with one row per galaxy and a modulus column per catalogue, e.g. the output of 'peculiar
match' (columns such as a_mu, b_mu). For each catalogue the offset mu(catalogue) - mu(reference)
is the weighted mean over the galaxies both measured (weights 1/(sigma_1^2 + sigma_2^2)), with its
error, the number shared, chi2/dof, the median and a kappa-sigma clipped mean (clipping starts at
the median, so one blunder among the shared galaxies cannot move it). With --apply the clipped
offset (the plain one when nothing is rejected) is subtracted before combining. Every galaxy then gets
  mu = sum(w mu)/sum(w), mu_err = 1/sqrt(sum w), n_dist (moduli used), mu_chi2
with w = 1/sigma^2. The mu and mu_err roles of OUT point at the new columns, so
'peculiar velocities OUT ...' uses them. Rows are never dropped.

options:
  -o, --output FILE     output table (format from the extension, or --out-format)
  --mu COLS             modulus columns, comma-separated (at least one)
  --err COLS            their error columns in the same order (default: COL_err, e_COL,
                        or ALIAS_e_NAME / ALIAS_NAME_err for ALIAS_NAME)
  --reference R         the reference: one of the --mu columns or its alias prefix (default the first)
  --apply               subtract the clipped offsets before combining (default: report only)
  --network             apply the network solution instead: all offsets fitted at once from every
                        galaxy measured more than once (m_g + offset_k per modulus), so a catalogue
                        that overlaps only another non-reference catalogue is tied too (always reported)
  --kappa K             clipping threshold of the robust check, in sigma (default 3)
  --report FILE         write the offsets JSON to FILE instead of stdout
  --format F            input format (csv, tsv, votable, fits, arrow)
  --out-format F        output format
`;

function list(value: string | undefined): string[] | undefined {
  if (value === undefined) return undefined;
  return value.split(",").map((s) => s.trim());
}

const command: Command = {
  name: "combine",
  summary: "harmonise zero points of distance catalogues and combine their distances",
  help,
  async run(argv, io) {
    const { values, positionals } = parseFlags(
      argv,
      {
        ...COMMON_FLAGS,
        output: { type: "string", short: "o" },
        mu: { type: "string" },
        err: { type: "string" },
        reference: { type: "string" },
        apply: { type: "boolean" },
        network: { type: "boolean" },
        kappa: { type: "string" },
        report: { type: "string" },
        format: { type: "string" },
        "out-format": { type: "string" },
      },
      "combine",
    );
    if (positionals.length !== 1) throw usageError("combine needs one input file; see 'peculiar combine --help'", { value: positionals });
    const input = positionals[0]!;
    const output = values.output;
    if (!output) throw usageError("combine needs -o OUT");
    assertOutputs([input], [output, values.report]);
    const mu = list(values.mu);
    if (!mu || mu.some((c) => c === "")) throw usageError("combine needs --mu with the modulus columns, comma-separated", { value: values.mu, expected: "e.g. --mu a_mu,b_mu" });
    const table = await readTable(input, values.format !== undefined ? { format: parseFormatName(values.format) } : {});
    const options: CombineOptions = { muColumns: mu, apply: values.apply === true, network: values.network === true, file: input };
    const err = list(values.err);
    if (err) options.errColumns = err.map((e) => (e === "" ? undefined : e));
    if (values.reference !== undefined) options.reference = values.reference;
    if (values.kappa !== undefined) options.kappa = numberFlag(values.kappa, "kappa", 3, (x) => x > 0, "a positive number");
    const { table: out, report } = combineDistances(table, options);
    await writeTable(out, output, values["out-format"] !== undefined ? { format: parseFormatName(values["out-format"]) } : {});
    const json = JSON.stringify({ input, output, reference: report.reference, applied: report.applied, solution: report.solution, rows: report.rows, nDist: report.nDist, offsets: report.offsets, notes: report.notes }, null, 2) + "\n";
    if (values.report !== undefined) await writeFileAtomic(values.report, json);
    else io.stdout.write(json);
    io.note(`combine: ${report.rows} rows; reference ${report.reference}; offsets ${report.applied ? `applied (${report.solution})` : "reported only (use --apply)"}`);
    for (const o of report.offsets) {
      if (o.column === report.reference) continue;
      io.note(`  ${o.column} - ${report.reference}: ${o.offsetMag.toFixed(4)} +- ${o.offsetErrMag.toFixed(4)} mag from ${o.nShared} shared (clipped ${o.clippedOffsetMag.toFixed(4)}, ${o.nRejected} rejected; chi2/dof ${o.chi2Dof.toFixed(2)}; network ${o.networkOffsetMag.toFixed(4)} +- ${o.networkOffsetErrMag.toFixed(4)})${report.applied ? `; applied ${o.appliedMag.toFixed(4)}` : ""}`);
    }
    const byN = Object.entries(report.nDist).sort((a, b) => Number(a[0]) - Number(b[0])).map(([k, v]) => `${v} with ${k}`).join(", ");
    io.note(`  galaxies by number of moduli: ${byN}`);
    for (const n of report.notes) io.note(`  note: ${n}`);
    for (const r of report.renamed) io.note(`  kept input column ${r}`);
    io.note(`wrote ${output}${values.report !== undefined ? ` and ${values.report}` : ""}`);
    return 0;
  },
};
export default command;
