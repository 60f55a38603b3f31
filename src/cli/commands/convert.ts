/**
 * peculiar convert IN OUT: rewrites a catalogue in another format, keeping every row (bad ones
 * flagged), and optionally adds Galactic (l, b) and supergalactic (sgl, sgb) columns in degrees.
 */
import type { Table } from "apache-arrow";
import { COMMON_FLAGS, parseFlags, type Command } from "../command.js";
import { CATALOGUE_FLAGS, CATALOGUE_FLAGS_HELP, loadForCommand, parseCatalogueFlags } from "../catalogue-flags.js";
import { PeculiarError, usageError } from "../../errors.js";
import { assertOutputs, formatFromPath, writeTable } from "../../catalogue/io.js";
import { columnMeta, hasColumn, withColumns, type ColumnData } from "../../catalogue/columns.js";
import { recordStep, type Role } from "../../catalogue/meta.js";
import { countInvalid, validMask } from "../../catalogue/validity.js";
import { convertPositions, type SkyFrame } from "../../sky/index.js";
import type { Catalogue } from "../../catalogue/load.js";

type AddedFrame = Exclude<SkyFrame, "icrs">;

/** Output columns of each frame (DEVELOPERS.md column contract) with their UCDs (IVOA UCD1+). */
const FRAME_COLUMNS: Record<AddedFrame, { lon: string; lat: string; ucdLon: string; ucdLat: string; roles: [Role | undefined, Role | undefined] }> = {
  galactic: { lon: "l", lat: "b", ucdLon: "pos.galactic.lon", ucdLat: "pos.galactic.lat", roles: ["glon", "glat"] },
  supergalactic: { lon: "sgl", lat: "sgb", ucdLon: "pos.supergalactic.lon", ucdLat: "pos.supergalactic.lat", roles: [undefined, undefined] },
};

const help = `usage: peculiar convert IN OUT [--add-frames galactic,supergalactic] [--col ROLE=NAME ...]
                        [--format F] [--out-format F]

Writes the catalogue IN to OUT in the format of OUT's extension (or --out-format): CSV, TSV,
VOTable, FITS or Arrow. Every row is kept; rows with problems (bad field count, missing,
non-numeric or out-of-range coordinates) stay, with valid = false and the reason in
invalid_reason. OUT must not be IN; OUT is written atomically, so a failed run leaves none.

options:
  --add-frames LIST  add columns in degrees computed from RA/Dec (ICRS): galactic -> l, b;
                     supergalactic -> sgl, sgb (null for invalid rows). Hipparcos (ESA 1997)
                     Galactic pole and node; de Vaucouleurs RC2 supergalactic pole and origin.
${CATALOGUE_FLAGS_HELP}
  -q, --quiet        no summaries on stderr
`;

function parseFrames(text: string | undefined): AddedFrame[] {
  if (text === undefined) return [];
  const out: AddedFrame[] = [];
  for (const raw of text.split(",")) {
    const f = raw.trim().toLowerCase();
    if (f === "") continue;
    const name = f === "gal" ? "galactic" : f === "sg" || f === "supergal" ? "supergalactic" : f;
    if (name !== "galactic" && name !== "supergalactic") throw usageError(`--add-frames: unknown frame '${raw.trim()}'`, { expected: "galactic, supergalactic" });
    if (!out.includes(name)) out.push(name);
  }
  if (out.length === 0) throw usageError("--add-frames: no frame given", { expected: "galactic, supergalactic" });
  return out;
}

/**
 * An existing column with an output name may be replaced only when it holds the same quantity
 * (its role or UCD says so); anything else would be lost, so it stops the run.
 */
function checkExisting(cat: Catalogue, name: string, role: Role | undefined, ucd: string, notes: string[]): void {
  if (!hasColumn(cat.table, name)) return;
  const sameRole = role !== undefined && cat.roles[role] === name;
  const sameUcd = (columnMeta(cat.table, name).ucd ?? "").toLowerCase() === ucd.toLowerCase();
  if (!sameRole && !sameUcd) {
    throw new PeculiarError("column", `already has a column ${name} that is not ${ucd}; it would be overwritten`, {
      file: cat.file,
      column: name,
      expected: "a file without that column (rename it first)",
    });
  }
  notes.push(`column ${name} recomputed from RA/Dec`);
}

function frameColumns(cat: Catalogue, frames: AddedFrame[], notes: string[]): ColumnData[] {
  const ok = validMask(cat.table);
  const n = cat.table.numRows;
  const nulls = new Uint8Array(n);
  for (let i = 0; i < n; i++) nulls[i] = ok[i] && !Number.isNaN(cat.raDeg[i]!) && !Number.isNaN(cat.decDeg[i]!) ? 0 : 1;
  const out: ColumnData[] = [];
  for (const frame of frames) {
    const spec = FRAME_COLUMNS[frame];
    checkExisting(cat, spec.lon, spec.roles[0], spec.ucdLon, notes);
    checkExisting(cat, spec.lat, spec.roles[1], spec.ucdLat, notes);
    const { lonDeg, latDeg } = convertPositions(cat.raDeg, cat.decDeg, "icrs", frame);
    for (let i = 0; i < n; i++) {
      if (nulls[i]) {
        lonDeg[i] = NaN;
        latDeg[i] = NaN;
      }
    }
    const c = (name: string, values: Float64Array, ucd: string, description: string): ColumnData => {
      const col: ColumnData = { name, kind: "float64", values, meta: { unit: "deg", ucd, description } };
      if (nulls.some((x) => x === 1)) col.nulls = nulls;
      return col;
    };
    const label = frame === "galactic" ? "Galactic" : "supergalactic";
    out.push(c(spec.lon, lonDeg, spec.ucdLon, `${label} longitude from ICRS RA/Dec`));
    out.push(c(spec.lat, latDeg, spec.ucdLat, `${label} latitude from ICRS RA/Dec`));
  }
  return out;
}

const command: Command = {
  name: "convert",
  summary: "convert between CSV/TSV, VOTable, FITS and Arrow; add Galactic/supergalactic columns",
  help,
  async run(argv, io) {
    const { values, positionals } = parseFlags(argv, { ...COMMON_FLAGS, ...CATALOGUE_FLAGS, "add-frames": { type: "string" } }, "convert");
    if (positionals.length !== 2) throw usageError(`expected IN and OUT, got ${positionals.length} file(s); see 'peculiar convert --help'`);
    const [input, output] = positionals as [string, string];
    const flags = parseCatalogueFlags(values);
    const frames = parseFrames(values["add-frames"]);
    assertOutputs([input], [output]);
    const outFormat = flags.outFormat ?? formatFromPath(output); // fail on an unknown extension before reading
    const cat = await loadForCommand(input, flags, io, frames.length ? { require: ["ra", "dec"] } : {});
    const notes: string[] = [];
    let table: Table = cat.table;
    const added = frames.length ? frameColumns(cat, frames, notes) : [];
    const meta = recordStep(new Map(table.schema.metadata), "convert", { from: input, to: output, format: outFormat, add_frames: frames });
    table = withColumns(table, added, meta);
    await writeTable(table, output, { format: outFormat });
    for (const n of notes) io.note(`${output}: ${n}`);
    const invalid = countInvalid(table);
    const addedText = added.length ? `; added ${added.map((c) => c.name).join(", ")} (deg)` : "";
    io.note(`${output}: wrote ${table.numRows} rows (${table.numRows - invalid} valid, ${invalid} invalid kept and flagged) as ${outFormat}${addedText}`);
    return 0;
  },
};
export default command;
