/**
 * `peculiar dedupe A -o OUT --radius R [--max-dv V] [--collapse]`: rows of one catalogue that are
 * the same object, linked transitively (src/crossmatch/dedupe.ts).
 */
import type { Command, Io } from "../command.js";
import { COMMON_FLAGS, numberFlag, parseFlags } from "../command.js";
import { usageError } from "../../errors.js";
import { CATALOGUE_FLAGS, CATALOGUE_FLAGS_HELP, loadForCommand, parseCatalogueFlags } from "../catalogue-flags.js";
import { assertOutputs, writeFileAtomic, writeTable } from "../../catalogue/io.js";
import { leadingRowText, type RowText } from "../../catalogue/line-text.js";
import { columnsOf, tableFromColumns, takeColumn, type ColumnData } from "../../catalogue/columns.js";
import { recordStep } from "../../catalogue/meta.js";
import { validMask } from "../../catalogue/validity.js";
import { parseAngleArcsec } from "../../crossmatch/radius.js";
import { dedupe, representatives } from "../../crossmatch/dedupe.js";
import { sideExtras } from "../../crossmatch/inputs.js";
import { sourceRows } from "../../catalogue/validity.js";

const help = `usage: peculiar dedupe A -o OUT --radius R [options]

Finds rows of one catalogue that are the same object: two rows closer than R on the sky (and,
with --max-dv, closer than V km/s in velocity) are linked, and links are followed transitively
(a chain of rows each within R of the next is one object). Every row is kept and gets
  dup_group   the object it belongs to (0, 1, ... in order of the object's first row)
  dup_size    rows in that object (1 for a row with no duplicate)

options:
  -o, --output FILE    output table (format from the extension, or --out-format)
  --radius R           linking radius with a unit: 2arcsec, 0.5arcmin, 1e-3deg
  --max-dv V           link only rows whose velocities (cz, or c*z) differ by at most V km/s;
                       rows with a velocity missing are linked on position alone
  --collapse           write one row per object instead: the object's first valid row in file
                       order (its first row when none is valid), values unchanged, with dup_size
                       and dup_rows (the source rows of all its rows, ";"-separated)
  --report FILE.json   counts as JSON
  --partitions N       process the sky as N declination bands one after another (default 1)
${CATALOGUE_FLAGS_HELP}
  -q, --quiet          no summary on stderr

In CSV output, the cells of a number-only CSV input are written as the file spelled them (where the
delimiter is the same).
`;

const command: Command = {
  name: "dedupe",
  summary: "find rows of one catalogue that are the same object",
  help,
  async run(argv: string[], io: Io) {
    const { values, positionals } = parseFlags(
      argv,
      {
        ...COMMON_FLAGS,
        ...CATALOGUE_FLAGS,
        output: { type: "string", short: "o" },
        radius: { type: "string" },
        "max-dv": { type: "string" },
        collapse: { type: "boolean" },
        report: { type: "string" },
        partitions: { type: "string" },
      },
      "dedupe",
    );
    if (positionals.length !== 1) throw usageError("dedupe needs one input catalogue; see 'peculiar dedupe --help'", { value: positionals });
    const path = positionals[0]!;
    const out = values.output;
    if (!out) throw usageError("dedupe needs an output file: -o OUT");
    assertOutputs([path], [out, values.report]);
    if (values.radius === undefined) throw usageError("dedupe needs --radius R (e.g. 2arcsec)");
    const radiusArcsec = parseAngleArcsec(values.radius, "--radius");
    const maxDvKmS = values["max-dv"] === undefined ? undefined : numberFlag(values["max-dv"], "max-dv", 0, (x) => x >= 0, "km/s >= 0");
    const partitions = numberFlag(values.partitions, "partitions", 1, (x) => Number.isInteger(x) && x >= 1 && x <= 4096, "an integer 1..4096");
    const flags = parseCatalogueFlags(values);
    const cat = await loadForCommand(path, flags, io, { require: ["ra", "dec"] });
    const extras = sideExtras(cat.table, cat.roles, path, cat.units);
    if (maxDvKmS !== undefined && !extras.velocityKmS) throw usageError(`--max-dv needs a velocity (role cz or z) in ${path} (name it with --col cz=NAME or --col z=NAME)`);
    const opts: { radiusArcsec: number; maxDvKmS?: number; partitions: number } = { radiusArcsec, partitions };
    if (maxDvKmS !== undefined) opts.maxDvKmS = maxDvKmS;
    const r = dedupe(cat.raDeg, cat.decDeg, extras.velocityKmS, opts);
    const settings = { radiusArcsec, maxDvKmS: maxDvKmS ?? null, collapse: Boolean(values.collapse), input: path };
    const meta = recordStep(new Map(cat.table.schema.metadata), "dedupe", settings);
    const reserved = new Set(["dup_group", "dup_size", "dup_rows"]);
    const clash = cat.table.schema.fields.find((f) => reserved.has(f.name));
    if (clash) throw usageError(`${path} already has a column "${clash.name}"; rename it (or dedupe the original catalogue)`);
    let table;
    let rowText: RowText[];
    if (!values.collapse) {
      const cols: ColumnData[] = columnsOf(cat.table);
      cols.push({ name: "dup_group", kind: "int32", values: r.group, meta: { description: `object id: rows linked within ${radiusArcsec} arcsec${maxDvKmS !== undefined ? ` and ${maxDvKmS} km/s` : ""}, transitively` } });
      cols.push({ name: "dup_size", kind: "int32", values: r.size, meta: { description: "rows in the object" } });
      table = tableFromColumns(cols, meta, cat.table.numRows);
      rowText = leadingRowText(cat.table, Int32Array.from({ length: cat.table.numRows }, (_, i) => i));
    } else {
      const reps = representatives(r.group, r.nGroups, validMask(cat.table));
      const cols = columnsOf(cat.table).map((c) => takeColumn(c, reps));
      const src = sourceRows(cat.table);
      const lists = new Array<string[]>(r.nGroups);
      for (let i = 0; i < r.group.length; i++) (lists[r.group[i]!] ??= []).push(String(src[i]!));
      const size = new Int32Array(reps.length);
      const rowsText = new Array<string>(reps.length);
      const groupOfRep = new Int32Array(reps.length);
      for (let t = 0; t < reps.length; t++) {
        const g = r.group[reps[t]!]!;
        groupOfRep[t] = g;
        size[t] = r.size[reps[t]!]!;
        rowsText[t] = lists[g]!.join(";");
      }
      cols.push({ name: "dup_group", kind: "int32", values: groupOfRep, meta: { description: "object id" } });
      cols.push({ name: "dup_size", kind: "int32", values: size, meta: { description: "rows the object stands for" } });
      cols.push({ name: "dup_rows", kind: "utf8", values: rowsText, meta: { description: "source rows of the object's rows; the first valid one's values are kept" } });
      table = tableFromColumns(cols, meta, reps.length);
      rowText = leadingRowText(cat.table, reps);
    }
    // a CSV output copies the input's cells as spelled there (line-text.ts), where it can
    await writeTable(table, out, { ...(flags.outFormat ? { format: flags.outFormat } : {}), rowText });
    io.note(
      `dedupe: ${cat.table.numRows} rows, ${r.nGroups} objects; ${r.duplicateGroups} objects with duplicates (${r.duplicateRows} rows, largest ${r.largest}); ${r.links} links within ${values.radius}` +
        (maxDvKmS !== undefined ? `; ${r.rejectedByDv} links rejected by --max-dv, ${r.uncheckedDv} kept without a velocity check` : "") +
        (values.collapse ? `; wrote ${table.numRows} rows` : ""),
    );
    if (values.report) {
      const report = { command: "dedupe", settings: { ...settings, output: out }, counts: { rows: cat.table.numRows, objects: r.nGroups, duplicateGroups: r.duplicateGroups, duplicateRows: r.duplicateRows, largest: r.largest, links: r.links, rejectedByDv: r.rejectedByDv, uncheckedDv: r.uncheckedDv } };
      await writeFileAtomic(values.report, JSON.stringify(report, null, 2) + "\n");
    }
    return 0;
  },
};

export default command;
