/**
 * peculiar inspect FILE: the schema (name, type, unit, UCD, nulls, role), the detected roles and
 * units, row counts, and the invalid rows as file:line: reason (first 20, then a count).
 */
import type { Table } from "apache-arrow";
import { COMMON_FLAGS, parseFlags, type Command } from "../command.js";
import { CATALOGUE_FLAGS, CATALOGUE_FLAGS_HELP, overridesFor, parseCatalogueFlags } from "../catalogue-flags.js";
import { usageError } from "../../errors.js";
import { loadCatalogue, type Catalogue } from "../../catalogue/load.js";
import { columnMeta, float64Column, kindOf, nullMask } from "../../catalogue/columns.js";
import { describeRoles } from "../../catalogue/roles.js";
import { invalidReasons, invalidRows } from "../../catalogue/validity.js";
import { META, SOURCE_ROW, readJsonMeta, type Role } from "../../catalogue/meta.js";

const SHOWN = 20;

const help = `usage: peculiar inspect FILE [--col ROLE=NAME ...] [--format F] [--json]

Shows what peculiar makes of a catalogue: every column (type, unit, UCD, null count, range of the
values and the role it was given), the detected roles and units, how many rows are valid, and each invalid row as
FILE:LINE: reason (the first ${SHOWN}, then how many more). Nothing is written.

options:
${CATALOGUE_FLAGS_HELP}
  --json             print one JSON object instead of text (all invalid rows)
  -q, --quiet        no notes on stderr
`;

interface ColumnInfo {
  name: string;
  type: string;
  unit: string;
  ucd: string;
  nulls: number;
  role: string;
  /** Smallest and largest non-null value of a numeric column (null for text, bool or no values); a 64-bit integer beyond 2^53 as its exact digits. */
  min: number | string | null;
  max: number | string | null;
}

const NUMERIC = new Set(["float64", "float32", "int8", "int16", "int32", "int64", "uint8", "uint16", "uint32", "uint64"]);

function range(table: Table, name: string, type: string): [number | string | null, number | string | null] {
  if (!NUMERIC.has(type)) return [null, null];
  if (type === "int64" || type === "uint64") {
    // exact: a double cannot hold these integers (2^63 - 1 would print as 9223372036854776000)
    let lo: bigint | null = null;
    let hi: bigint | null = null;
    const v = table.getChild(name)!;
    for (let i = 0; i < v.length; i++) {
      const x = v.get(i) as bigint | null;
      if (x === null || x === undefined) continue;
      if (lo === null || x < lo) lo = x;
      if (hi === null || x > hi) hi = x;
    }
    const out = (x: bigint | null) => (x === null ? null : x >= -(2n ** 53n) && x <= 2n ** 53n ? Number(x) : x.toString());
    return [out(lo), out(hi)];
  }
  let lo = Infinity;
  let hi = -Infinity;
  for (const x of float64Column(table, name)) {
    if (x < lo) lo = x;
    if (x > hi) hi = x;
  }
  return lo <= hi ? [lo, hi] : [null, null];
}

function shortNumber(x: number | string): string {
  if (typeof x === "string") return x;
  return Number.isInteger(x) ? String(x) : String(Number(x.toPrecision(8)));
}

interface InvalidRow {
  /** source_row: the line (text) or row (binary) in the file the row first came from. */
  line: number;
  /** 1-based row in this file's table. */
  row: number;
  reason: string;
}

function columnInfo(cat: Catalogue): ColumnInfo[] {
  const roleOf = new Map<string, Role[]>();
  for (const [role, col] of Object.entries(cat.roles) as [Role, string][]) roleOf.set(col, [...(roleOf.get(col) ?? []), role]);
  return cat.table.schema.fields.map((f) => {
    const m = columnMeta(cat.table, f.name);
    let nulls = 0;
    for (const x of nullMask(cat.table, f.name)) nulls += x;
    const type = kindOf(f.type) ?? String(f.type);
    const [min, max] = range(cat.table, f.name, type);
    return {
      name: f.name,
      type,
      min,
      max,
      unit: m.unit ?? "",
      ucd: m.ucd ?? "",
      nulls,
      role: (roleOf.get(f.name) ?? []).join(","),
    };
  });
}

/** The invalid rows with their line numbers; "line N: " / "row N: " prefixes for that same row are dropped. */
function invalidList(table: Table): InvalidRow[] {
  const rows = invalidRows(table);
  const reasons = invalidReasons(table);
  const src = table.getChild(SOURCE_ROW) ? float64Column(table, SOURCE_ROW) : undefined;
  return Array.from(rows, (i) => {
    const line = src && !Number.isNaN(src[i]!) ? src[i]! : i + 1;
    const prefix = new RegExp(`(^|; )(line|row|source row) ${line}: `, "g");
    return { line, row: i + 1, reason: (reasons[i] || "flagged").replace(prefix, "$1") };
  });
}

function pad(rows: string[][]): string[] {
  const widths = rows[0]!.map((_, j) => Math.max(...rows.map((r) => r[j]!.length)));
  return rows.map((r) => ("  " + r.map((c, j) => (j === r.length - 1 ? c : c.padEnd(widths[j]!))).join("  ")).trimEnd());
}

/** The first file of a table that was read back from our own output, or undefined when read from its origin. */
function originFile(source: { previous?: unknown }): string | undefined {
  let src: { file?: string; previous?: unknown } = source;
  let origin: string | undefined;
  for (let k = 0; k < 100 && typeof src.previous === "object" && src.previous !== null; k++) {
    src = src.previous as { file?: string; previous?: unknown };
    origin = src.file;
  }
  return origin;
}

const command: Command = {
  name: "inspect",
  summary: "show a catalogue's columns, detected roles, units and invalid rows",
  help,
  async run(argv, io) {
    const { values, positionals } = parseFlags(argv, { ...COMMON_FLAGS, ...CATALOGUE_FLAGS, json: { type: "boolean" } }, "inspect");
    if (positionals.length !== 1) throw usageError(`expected one FILE, got ${positionals.length}; see 'peculiar inspect --help'`);
    const file = positionals[0]!;
    const flags = parseCatalogueFlags(values);
    if (flags.outFormat !== undefined) throw usageError("inspect writes nothing; --out-format does not apply");
    const opts: Parameters<typeof loadCatalogue>[1] = { overrides: overridesFor(flags, 1), units: flags.units };
    if (flags.format !== undefined) opts.format = flags.format;
    if (flags.hdu !== undefined) opts.hdu = flags.hdu;
    const cat = await loadCatalogue(file, opts);
    const cols = columnInfo(cat);
    const bad = invalidList(cat.table);
    const total = cat.table.numRows;
    const source = readJsonMeta<{ format?: string; hdu?: number; extname?: string; skipped?: string[]; previous?: unknown; keptSourceRow?: boolean }>(cat.table, META.source) ?? {};

    if (values.json) {
      const out = {
        file,
        format: source.format ?? null,
        ...(source.hdu !== undefined ? { hdu: source.hdu } : {}),
        ...(source.extname !== undefined ? { extname: source.extname } : {}),
        rows: total,
        valid: total - bad.length,
        invalid: bad.length,
        columns: cols,
        roles: cat.roles,
        units: cat.units,
        positions: cat.positions,
        notes: cat.notes,
        skipped: source.skipped ?? [],
        origin: originFile(source) ?? file,
        invalidRows: bad,
      };
      io.stdout.write(JSON.stringify(out, null, 2) + "\n");
      return 0;
    }

    const lines: string[] = [];
    const where = source.hdu !== undefined ? `, HDU ${source.hdu}${source.extname ? ` (${source.extname})` : ""}` : "";
    lines.push(`${file} (${source.format ?? "?"}${where}): ${total} rows, ${total - bad.length} valid, ${bad.length} invalid`);
    lines.push("");
    lines.push("columns:");
    const span = (c: ColumnInfo) => (c.min === null || c.max === null ? "" : `${shortNumber(c.min)} .. ${shortNumber(c.max)}`);
    lines.push(...pad([["name", "type", "unit", "ucd", "nulls", "range", "role"], ...cols.map((c) => [c.name, c.type, c.unit, c.ucd, String(c.nulls), span(c), c.role])]));
    lines.push("");
    lines.push(`roles: ${describeRoles(cat.table, cat.roles, cat.units)}`);
    const positions = { radec: "from RA/Dec", galactic: "from Galactic l, b", "cds-parts": "from sexagesimal part columns", none: "none" }[cat.positions];
    lines.push(`positions: ${positions}`);
    if (cat.notes.length || source.skipped?.length) {
      lines.push("notes:");
      for (const n of cat.notes) lines.push(`  ${n}`);
      for (const s of source.skipped ?? []) lines.push(`  skipped: ${s}`);
    }
    if (bad.length) {
      lines.push("");
      lines.push("invalid rows:");
      // A table we wrote earlier keeps the source_row of its first file: name both places.
      const origin = originFile(source);
      // Without a named first file, a kept source_row counts rows of a table we made: both numbers.
      const label = (b: InvalidRow) => (origin !== undefined ? `${file} row ${b.row} (${origin}:${b.line})` : source.keptSourceRow ? `${file} row ${b.row} (source row ${b.line})` : `${file}:${b.line}`);
      for (const b of bad.slice(0, SHOWN)) lines.push(`  ${label(b)}: ${b.reason}`);
      if (bad.length > SHOWN) lines.push(`  ... and ${bad.length - SHOWN} more invalid rows (--json lists all)`);
    }
    io.stdout.write(lines.join("\n") + "\n");
    return 0;
  },
};
export default command;
