/**
 * `peculiar velocities IN -o OUT`: redshifts into one rest frame, distances into z_cos and
 * peculiar velocities with errors, Galactic/supergalactic positions (src/cosmology/velocities.ts).
 * Counts go to stderr; the table to OUT.
 */
import type { Command } from "../command.js";
import { COMMON_FLAGS, parseFlags, h0Flag, omegaMFlag } from "../command.js";
import { usageError } from "../../errors.js";
import { assertOutputs, writeTable } from "../../catalogue/io.js";
import { APEXES, FRAME_FORMS, VELOCITY_FRAMES, type FrameForm, type VelocityFrame } from "../../cosmology/restframes.js";
import { ESTIMATORS, type Estimator } from "../../cosmology/estimators.js";
import { DISTANCE_SOURCES, type DistanceSource } from "../../cosmology/distance-indicators.js";
import { DEFAULT_COSMOLOGY, type DistanceKind } from "../../cosmology/distances.js";
import { computeVelocities, type VelocityOptions } from "../../cosmology/velocities.js";
import { CATALOGUE_FLAGS, CATALOGUE_FLAGS_HELP, loadForCommand, parseCatalogueFlags } from "../catalogue-flags.js";

const KINDS = ["luminosity", "comoving", "angular"] as const;

function apexList(): string {
  const lines: string[] = [];
  for (const f of VELOCITY_FRAMES) {
    if (f === "helio") continue;
    const of = APEXES.filter((a) => a.frame === f);
    of.forEach((a, i) => {
      lines.push(`  ${f.padEnd(4)} ${a.name.padEnd(16)} ${a.speedKmS.toFixed(2).padStart(7)} km/s to (l, b) = (${a.lDeg.toFixed(3)}, ${a.bDeg >= 0 ? "+" : ""}${a.bDeg.toFixed(3)})${i === 0 ? "  [default]" : ""}`);
      lines.push(`       ${a.citation}`);
    });
  }
  return lines.join("\n");
}

const help = () => `usage: peculiar velocities IN -o OUT [options]

Puts redshifts into one velocity frame, turns distances (distance modulus, distance or
log-distance ratio) into cosmological redshifts and peculiar velocities with errors, and adds
Galactic and supergalactic coordinates. Keeps every input column and row; rows without a usable
redshift, distance or position get valid = false and a reason.

Adds: z_<frame>, cz_<frame>, dist_mpc (luminosity distance), dist_err_mpc, dist_lo_mpc, dist_hi_mpc,
dist_c_mpc (comoving), dist_c_err_mpc, z_cos, v_pec, v_pec_err, v_pec_lo, v_pec_hi, l, b, sgl, sgb,
sgx, sgy, sgz (supergalactic Cartesian of the comoving distance, Mpc).

options:
  -o, --output FILE       output table (format from the extension, or --out-format)
  --frame F               ${VELOCITY_FRAMES.join(" | ")} (default cmb)
  --apex NAME             the solar motion for the frame (default: the first listed below)
  --form F                exact (default): 1 + z_frame = (1 + z_helio)/(1 - V.n/c)
                          relativistic: 1 + z_frame = (1 + z_helio)/(gamma (1 - V.n/c))
                          additive: cz_frame = cz_helio + V.n (older catalogues)
  --input-frame F         frame of the input redshifts (default helio)
  --input-apex NAME       apex of the input frame
  --h0 X                  Hubble constant, km/s/Mpc (default ${DEFAULT_COSMOLOGY.h0})
  --omega-m X             matter density of the flat LCDM model (default ${DEFAULT_COSMOLOGY.omegaM})
  --estimator E           exact (default): c (z - z_cos)/(1 + z_cos)  (Davis & Scrimgeour 2014)
                          linear: cz - H0 D_C
                          log: c z_mod ln(c z_mod/(H0 D_L))  (Watkins & Feldman 2015)
  --distance S            ${DISTANCE_SOURCES.join(" | ")}: which column gives the distance (default: the
                          first of mu, dist, eta that has a column)
  --dist-kind K           kind of a dist column: ${KINDS.join(" | ")} (default luminosity)
  redshift roles: cz (km/s) or z, with cz_err / z_err; distance roles: mu, dist, eta with _err
${CATALOGUE_FLAGS_HELP}

apexes (Sun's velocity with respect to each frame):
${apexList()}
`;

function choice<T extends string>(value: string | undefined, flag: string, allowed: readonly T[], fallback: T): T {
  if (value === undefined) return fallback;
  if ((allowed as readonly string[]).includes(value)) return value as T;
  throw usageError(`bad value for --${flag}`, { value, expected: allowed.join(", ") });
}

const command: Command = {
  name: "velocities",
  summary: "redshift frames, distances and peculiar velocities with errors",
  help: help(),
  async run(argv, io) {
    const { values, positionals } = parseFlags(
      argv,
      {
        ...COMMON_FLAGS,
        ...CATALOGUE_FLAGS,
        output: { type: "string", short: "o" },
        frame: { type: "string" },
        apex: { type: "string" },
        form: { type: "string" },
        "input-frame": { type: "string" },
        "input-apex": { type: "string" },
        h0: { type: "string" },
        "omega-m": { type: "string" },
        estimator: { type: "string" },
        distance: { type: "string" },
        "dist-kind": { type: "string" },
      },
      "velocities",
    );
    if (positionals.length !== 1) throw usageError("velocities needs one input file; see 'peculiar velocities --help'", { value: positionals });
    const input = positionals[0]!;
    const output = values.output;
    if (!output) throw usageError("velocities needs -o OUT");
    assertOutputs([input], [output]);
    const frame = choice<VelocityFrame>(values.frame, "frame", VELOCITY_FRAMES, "cmb");
    const options: VelocityOptions = {
      frame,
      form: choice<FrameForm>(values.form, "form", FRAME_FORMS, "exact"),
      cosmology: {
        h0: h0Flag(values.h0),
        omegaM: omegaMFlag(values["omega-m"]),
      },
      estimator: choice<Estimator>(values.estimator, "estimator", ESTIMATORS, "exact"),
      redshiftFrame: choice<VelocityFrame>(values["input-frame"], "input-frame", VELOCITY_FRAMES, "helio"),
    };
    if (values.apex !== undefined) options.apex = values.apex;
    if (values["input-apex"] !== undefined) options.redshiftApex = values["input-apex"];
    if (values.distance !== undefined) options.distance = choice<DistanceSource>(values.distance, "distance", DISTANCE_SOURCES, "mu");
    if (values["dist-kind"] !== undefined) options.distKind = choice<DistanceKind>(values["dist-kind"], "dist-kind", KINDS, "luminosity");
    const flags = parseCatalogueFlags(values);
    const cat = await loadForCommand(input, flags, io, { require: ["ra", "dec"] });
    const { table, report } = computeVelocities(cat, options);
    await writeTable(table, output, flags.outFormat !== undefined ? { format: flags.outFormat } : {});
    io.note(
      `velocities: ${report.rows} rows, ${report.withVelocity} with a peculiar velocity (${report.estimator}, ${report.frame} frame, apex ${report.apex}, ${report.form} form; ` +
        `redshift from ${report.redshiftColumn}, distance from ${report.distanceSource} column ${report.distanceColumn}); ${report.valid} valid`,
    );
    for (const [why, k] of Object.entries(report.flagged)) io.note(`  ${k} flagged: ${why}`);
    if (report.withoutError > 0) io.note(`  ${report.withoutError} rows have a velocity but no error (no distance error given)`);
    for (const r of report.renamed) io.note(`  kept input column ${r}`);
    for (const n of report.notes) io.note(`  note: ${n}`);
    io.note(`wrote ${output}`);
    return 0;
  },
};
export default command;
