/**
 * Flags shared by every command that reads catalogues, and the summary each prints on stderr.
 *
 *   --col ROLE=NAME     use column NAME for ROLE (repeatable; ROLE=  with nothing unsets the role).
 *                       With several inputs, --col 2:ROLE=NAME applies to the second input only.
 *   --unit ROLE=UNIT    read a coordinate column in UNIT (deg, rad, h) when the file does not say.
 *   --format F          input format (csv, tsv, votable, fits, arrow) instead of the extension's.
 *   --out-format F      output format instead of the output extension's.
 *   --hdu N|NAME        FITS: the HDU to read (default: the first binary table).
 *
 * Spread CATALOGUE_FLAGS into a command's option table, call parseCatalogueFlags on the parsed
 * values, then loadForCommand for each input.
 */
import { PeculiarError, usageError } from "../errors.js";
import { loadCatalogue, type Catalogue } from "../catalogue/load.js";
import { readTableAhead, type ReadAhead } from "../catalogue/read-ahead.js";
import type { Table } from "apache-arrow";
import { describeRoles } from "../catalogue/roles.js";
import { countInvalid } from "../catalogue/validity.js";
import { ROLES, type Role, type RoleMap } from "../catalogue/meta.js";
import { parseFormatName, type FormatName } from "../catalogue/io.js";
import type { Io } from "./command.js";

export const CATALOGUE_FLAGS = {
  col: { type: "string", multiple: true },
  unit: { type: "string", multiple: true },
  format: { type: "string" },
  "out-format": { type: "string" },
  hdu: { type: "string" },
} as const;

/** Help lines for the shared flags, to paste into a command's help. */
export const CATALOGUE_FLAGS_HELP = [
  "  --col ROLE=NAME    use column NAME for ROLE (repeatable); ROLE= unsets a role;",
  "                     with several inputs, --col N:ROLE=NAME applies to input N only",
  `                     roles: ${ROLES.join(", ")}`,
  "  --unit ROLE=UNIT   unit of a coordinate column the file does not give (deg, rad, h)",
  "  --format F         input format instead of the extension's: csv, tsv, votable, fits, arrow",
  "  --out-format F     output format instead of the output extension's",
  "  --hdu N|NAME       FITS: the HDU to read (number, 0 = primary, or EXTNAME); default the first table",
].join("\n");

export interface CatalogueFlags {
  /** Overrides for every input. */
  overrides: RoleMap;
  /** Overrides for input N (1-based), from --col N:ROLE=NAME. */
  perInput: Map<number, RoleMap>;
  units: Partial<Record<Role, string>>;
  format?: FormatName;
  outFormat?: FormatName;
  hdu?: number | string;
}

interface RawValues {
  col?: string[] | undefined;
  unit?: string[] | undefined;
  format?: string | undefined;
  "out-format"?: string | undefined;
  hdu?: string | undefined;
}

function parseRole(role: string, flag: string, item: string): Role {
  if (!(ROLES as readonly string[]).includes(role)) {
    throw usageError(`--${flag} ${item}: unknown role '${role}'`, { expected: `one of ${ROLES.join(", ")}` });
  }
  return role as Role;
}

/** Parses --col, --unit, --format and --out-format values; `inputs` is how many inputs the command reads (--col N: beyond them is an error). */
export function parseCatalogueFlags(values: RawValues, inputs = 1): CatalogueFlags {
  const out: CatalogueFlags = { overrides: {}, perInput: new Map(), units: {} };
  for (const item of values.col ?? []) {
    const m = /^(?:(\d+):)?([A-Za-z_]+)=(.*)$/.exec(item);
    if (!m) throw usageError(`--col ${item}: expected ROLE=NAME or N:ROLE=NAME`);
    const role = parseRole(m[2]!, "col", item);
    const name = m[3]!;
    if (m[1] !== undefined) {
      const k = Number(m[1]);
      if (k < 1) throw usageError(`--col ${item}: inputs are numbered from 1`);
      if (k > inputs) throw usageError(`--col ${item}: there is no input ${k}; this command reads ${inputs === 1 ? "one input" : `${inputs} inputs`}`);
      const map = out.perInput.get(k) ?? {};
      map[role] = name;
      out.perInput.set(k, map);
    } else out.overrides[role] = name;
  }
  for (const item of values.unit ?? []) {
    const m = /^([A-Za-z_]+)=(.+)$/.exec(item);
    if (!m) throw usageError(`--unit ${item}: expected ROLE=UNIT`);
    out.units[parseRole(m[1]!, "unit", item)] = m[2]!.trim();
  }
  if (values.format !== undefined) out.format = parseFormatName(values.format);
  if (values["out-format"] !== undefined) out.outFormat = parseFormatName(values["out-format"]);
  if (values.hdu !== undefined) out.hdu = /^\d+$/.test(values.hdu.trim()) ? Number(values.hdu) : values.hdu.trim();
  return out;
}

/** The overrides for input `index` (1-based): the shared ones, then that input's own. */
export function overridesFor(flags: CatalogueFlags, index = 1): RoleMap {
  return { ...flags.overrides, ...(flags.perInput.get(index) ?? {}) };
}

/** Prints the role choice, the notes and the row counts of a loaded catalogue on stderr. */
export function reportCatalogue(cat: Catalogue, io: Io): void {
  io.note(`${cat.file}: ${describeRoles(cat.table, cat.roles, cat.units)}`);
  for (const n of cat.notes) io.note(`${cat.file}: ${n}`);
  const invalid = countInvalid(cat.table);
  io.note(`${cat.file}: ${cat.table.numRows} rows, ${cat.table.numRows - invalid} valid, ${invalid} invalid`);
}

/**
 * Loads input number `index` (1-based) with the shared flags and reports it. `require` lists the
 * roles the command needs. An override that names a column of another input only is an error here.
 */
/**
 * Starts reading an input on a worker thread (read-ahead.ts) with the command's --format and --hdu:
 * give the promise to loadForCommand as `table` to read two inputs at once (cancel it if it is not needed).
 */
export function readAheadForCommand(path: string, flags: CatalogueFlags): ReadAhead {
  const read: { format?: FormatName; hdu?: number | string } = {};
  if (flags.format !== undefined) read.format = flags.format;
  if (flags.hdu !== undefined) read.hdu = flags.hdu;
  const p = readTableAhead(path, read);
  p.catch(() => {}); // the error is raised where the table is awaited
  return p;
}

export async function loadForCommand(path: string, flags: CatalogueFlags, io: Io, options: { index?: number; require?: Role[]; table?: Promise<Table> } = {}): Promise<Catalogue> {
  const o: Parameters<typeof loadCatalogue>[1] = { overrides: overridesFor(flags, options.index ?? 1), units: flags.units };
  if (flags.format !== undefined) o.format = flags.format;
  if (flags.hdu !== undefined) o.hdu = flags.hdu;
  if (options.require) o.require = options.require;
  if (options.table) o.table = options.table;
  let cat: Catalogue;
  try {
    cat = await loadCatalogue(path, o);
  } catch (e) {
    if (e instanceof PeculiarError && e.code === "column" && e.place.file === undefined) {
      throw new PeculiarError("column", e.message, { file: path }, { cause: e });
    }
    // A shared --col that fits one input only: say how to aim it at one input.
    if (e instanceof PeculiarError && e.code === "column" && options.index !== undefined && /^(.*: )?--col [a-z_]+=/.test(e.message)) {
      throw new PeculiarError("column", `${e.message} (input ${options.index}; --col N:ROLE=NAME gives a column for input N only)`, {}, { cause: e });
    }
    throw e;
  }
  reportCatalogue(cat, io);
  return cat;
}
