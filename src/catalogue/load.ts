/**
 * A catalogue ready for the steps: the table as read, its column roles, ICRS positions in degrees,
 * and every row with an unusable position kept but flagged (valid = false, reason appended).
 *
 * Positions come from the ra/dec columns (numbers in deg, rad or h, or sexagesimal text), from
 * Galactic glon/glat when there is no RA/Dec, or from CDS ReadMe sexagesimal parts
 * (RAh RAm RAs DE- DEd DEm DEs, CDS "Standard for Astronomical Catalogues" v3.5) when neither is there.
 * The unit of a coordinate column comes from (in order) --unit, the column's unit metadata, a unit
 * suffix in its name (ra_deg, ra_rad, ra_hours); without any, numbers are degrees and bare
 * sexagesimal text is hours for RA and degrees for Dec (common practice), and a note says so.
 * Hours and degrees are never guessed from the values.
 */
import { Schema, Table } from "apache-arrow";
import { PeculiarError } from "../errors.js";
import {
  angleFromNumber,
  anglesFromNumbers,
  convertPositions,
  parseAngleUnit,
  parseAngles,
  type AngleColumn,
  type AngleKind,
  type AngleUnit,
} from "../sky/index.js";
import { columnMeta, float64Column, hasColumn, kindOf, nullMask, stringColumn, valuesView } from "./columns.js";
import { readTable, type FormatName } from "./io.js";
import { META, ROLES, getRoles, readJsonMeta, setJsonMeta, type Role, type RoleMap } from "./meta.js";
import { detectRoles } from "./roles.js";
import { flagRows, invalidReasons, sourceRows, validMask } from "./validity.js";

export interface Catalogue {
  table: Table;
  roles: RoleMap;
  /** ICRS positions in degrees; NaN where the row's position is unusable. Read only (they may be the table's own column). */
  raDeg: Float64Array;
  decDeg: Float64Array;
  /** The unit each role was read in, for the summary ("h", "deg", "h:m:s", "km/s", ...). */
  units: Partial<Record<Role, string>>;
  /** How positions were found: "radec", "galactic", "cds-parts" or "none". */
  positions: "radec" | "galactic" | "cds-parts" | "none";
  /** Rows this step flagged for their positions. */
  badPositions: number;
  notes: string[];
  file: string;
}

export interface PrepareOptions {
  file: string;
  /** --col ROLE=NAME; an empty name unsets a role. */
  overrides?: RoleMap;
  /** --unit ROLE=UNIT for coordinate columns without (or with wrong) unit metadata. */
  units?: Partial<Record<Role, string>>;
  /** Roles the calling step needs; absent ones raise PeculiarError("column"). ra/dec are met by any position source. */
  require?: Role[];
}

export interface LoadOptions extends Omit<PrepareOptions, "file"> {
  format?: FormatName;
  hdu?: number | string;
  /** The table already being read (readTableAhead); else the file is read here. */
  table?: Promise<Table>;
}

/**
 * "line" for text tables, "row" for binary ones: how the reasons name source_row. A table we wrote
 * and read back keeps the source_row of the first file, so the first file's format decides; when
 * that file is not named (our CSV output read back, or a table that made rows of its own), "source row".
 */
function rowWord(table: Table): string {
  let src = readJsonMeta<{ format?: string; previous?: unknown; keptSourceRow?: boolean }>(table, META.source);
  for (let k = 0; k < 100 && src && typeof src.previous === "object" && src.previous !== null; k++) {
    src = src.previous as { format?: string; previous?: unknown; keptSourceRow?: boolean };
  }
  if (src?.keptSourceRow) return "source row";
  return src?.format === "csv" || src?.format === "tsv" ? "line" : "row";
}

/** The angle unit for a coordinate column, from --unit, metadata or the name; undefined = default. */
function unitFor(table: Table, role: Role, column: string, given: string | undefined, file: string, notes: string[]): AngleUnit | undefined {
  const metaUnit = columnMeta(table, column).unit;
  const text = given ?? metaUnit;
  const u = parseAngleUnit(text);
  if (u === null) {
    throw new PeculiarError("column", `unit "${text}" is not an angle unit`, {
      file,
      column,
      expected: `deg, rad or h (give one with --unit ${role}=UNIT)`,
    });
  }
  if (u !== undefined) return u;
  const k = column.toLowerCase();
  if (/(^|_)(deg|degrees?)$/.test(k)) return "deg";
  if (/(^|_)(rad|radians?)$/.test(k)) return "rad";
  if (/(^|_)(h|hr|hours?)$/.test(k)) return "h";
  return undefined;
}

interface Parsed {
  col: AngleColumn;
  unitLabel: string;
}

/** Reads one coordinate column as degrees with a reason per bad row. */
function readAngles(table: Table, column: string, kind: AngleKind, unit: AngleUnit | undefined, file: string, role: Role, notes: string[]): Parsed {
  const field = table.schema.fields.find((f) => f.name === column)!;
  const type = kindOf(field.type);
  if (type === "utf8") {
    const col = parseAngles(stringColumn(table, column), kind, unit);
    const label = unit ?? (kind === "ra" ? "h:m:s" : "d:m:s");
    if (unit === undefined) notes.push(`${role} <- ${column}: text without a unit; sexagesimal read as ${kind === "ra" ? "hours" : "degrees"}, plain numbers as degrees (common practice; --unit ${role}=UNIT to change)`);
    return { col, unitLabel: unit === undefined ? label : `${unit}` };
  }
  if (type === "bool") {
    throw new PeculiarError("column", "is a boolean column, not an angle", { file, column, expected: `an angle column for ${role}` });
  }
  if (type === "float32") notes.push(`${role} <- ${column} is float32: RA above 256 deg carries up to 0.055 arcsec of rounding (half a float32 step, 2^-15 deg)`);
  if (unit === undefined) notes.push(`${role} <- ${column}: no unit; read as degrees (common practice; --unit ${role}=h or rad to change)`);
  const values = valuesView(table, column, "float64") ?? float64Column(table, column);
  const col = (unit ?? "deg") === "deg" ? degreesChecked(values, kind) : anglesFromNumbers(values, kind, unit);
  if (col.invalid === 0) return { col, unitLabel: unit ?? "deg" };
  // Nulls and NaN are "missing" rather than "not a number".
  const nulls = nullMask(table, column);
  for (let i = 0; i < col.reasons.length; i++) if (col.reasons[i] === "is not a number") col.reasons[i] = nulls[i] ? "is empty" : "is NaN";
  return { col, unitLabel: unit ?? "deg" };
}

/**
 * anglesFromNumbers for degrees, with the rows in range taken as they are in one typed loop (no
 * result object per row); a row out of range or not a number gets angleFromNumber's value and reason.
 * Without a bad row, `reasons` is empty (and `invalid` 0), and a Float64Array comes back as it is
 * (the degrees are the column's own values: read only).
 */
function degreesChecked(values: ArrayLike<number>, kind: AngleKind): AngleColumn {
  const n = values.length;
  if (values instanceof Float64Array && allInRange(values, kind)) return { deg: values, reasons: [], invalid: 0 };
  const deg = new Float64Array(n);
  let reasons: (string | undefined)[] | undefined; // made at the first bad row
  let invalid = 0;
  const lo = kind === "ra" ? 0 : -90;
  const hi = kind === "ra" ? 360 : 90;
  for (let i = 0; i < n; i++) {
    const x = values[i]!;
    if (x >= lo && (x < hi || (x === hi && kind === "dec"))) {
      deg[i] = x;
      continue;
    }
    const r = angleFromNumber(x, kind, "deg");
    deg[i] = r.deg;
    if (r.reason !== undefined) {
      (reasons ??= new Array<string | undefined>(n))[i] = r.reason;
      invalid++;
    }
  }
  return { deg, reasons: reasons ?? [], invalid };
}

/** True when every value is a usable angle in degrees ([0, 360) for RA, [-90, 90] for Dec). */
function allInRange(values: Float64Array, kind: AngleKind): boolean {
  const lo = kind === "ra" ? 0 : -90;
  const hi = kind === "ra" ? 360 : 90;
  if (kind === "ra") {
    for (let i = 0; i < values.length; i++) if (!(values[i]! >= lo && values[i]! < hi)) return false;
  } else for (let i = 0; i < values.length; i++) if (!(values[i]! >= lo && values[i]! <= hi)) return false;
  return true;
}

/** The text of a cell for a reason: strings quoted, numbers as written. */
function cellText(table: Table, column: string, row: number): string {
  const v = table.getChild(column)!;
  if (!v.isValid(row)) return "";
  const x = v.get(row) as unknown;
  return typeof x === "string" ? JSON.stringify(x) : typeof x === "bigint" ? x.toString() : String(x);
}

/**
 * Adds reasons for bad coordinates of one column. A problem the row's reason already names (the
 * reader's "not a number" for this column, or the same finding in a file we wrote earlier) is not
 * reported twice.
 */
function collect(table: Table, column: string, col: AngleColumn, word: string, rows: Int32Array, prior: Prior, bad: Uint8Array, reasons: (string | undefined)[]): void {
  if (col.invalid === 0) return;
  for (let i = 0; i < col.reasons.length; i++) {
    const r = col.reasons[i];
    if (r === undefined) continue;
    const missing = r === "is empty" || r === "is NaN";
    const finding = missing ? `column ${column}: missing value` : `column ${column}: ${cellText(table, column, i)} ${r}`;
    addFinding(i, finding, missing ? `column ${column}:` : finding, word, rows, prior, bad, reasons);
  }
}

/** The reasons the table already has and whether each row is valid, read on first need (most tables have no bad position). */
class Prior {
  private reasons: string[] | undefined;
  private valid: Uint8Array | undefined;
  constructor(private readonly table: Table) {}
  at(i: number): string {
    this.reasons ??= invalidReasons(this.table);
    return this.reasons[i] ?? "";
  }
  isValid(i: number): boolean {
    this.valid ??= validMask(this.table);
    return this.valid[i] === 1;
  }
}

/**
 * Flags row i with "<word> <row>: finding" unless the row is already invalid with a reason that
 * contains `known` (a table we wrote and read back). A reason alone, on a row marked valid (or with
 * no usable valid column), does not stand for the flag.
 */
function addFinding(i: number, finding: string, known: string, word: string, rows: Int32Array, prior: Prior, bad: Uint8Array, reasons: (string | undefined)[]): void {
  const said = prior.at(i).includes(known);
  if (said && !prior.isValid(i)) return;
  bad[i] = 1;
  if (said) {
    // the reason is there already, only the flag was missing: no second copy of the text
    reasons[i] ??= "";
    return;
  }
  const text = `${word} ${rows[i]}: ${finding}`;
  reasons[i] = reasons[i] ? `${reasons[i]}; ${text}` : text;
}

const CDS_PARTS = { h: "RAh", m: "RAm", s: "RAs", sign: "DE-", d: "DEd", dm: "DEm", ds: "DEs" } as const;

function findColumn(table: Table, name: string): string | undefined {
  return table.schema.fields.find((f) => f.name.toLowerCase() === name.toLowerCase())?.name;
}

/** RA and Dec from CDS sexagesimal part columns; undefined when they are not all there. */
function cdsParts(table: Table): { ra: AngleColumn; dec: AngleColumn; names: string[] } | undefined {
  const h = findColumn(table, CDS_PARTS.h);
  const d = findColumn(table, CDS_PARTS.d);
  const sign = findColumn(table, CDS_PARTS.sign);
  if (!h || !d || !sign) return undefined;
  const m = findColumn(table, CDS_PARTS.m);
  const s = findColumn(table, CDS_PARTS.s);
  const dm = findColumn(table, CDS_PARTS.dm);
  const ds = findColumn(table, CDS_PARTS.ds);
  const n = table.numRows;
  const text = (col: string | undefined) => (col ? stringColumn(table, col) : new Array<string | null>(n).fill("0"));
  const H = text(h), M = text(m), S = text(s), SG = text(sign), D = text(d), DM = text(dm), DS = text(ds);
  const raText = new Array<string | null>(n);
  const decText = new Array<string | null>(n);
  for (let i = 0; i < n; i++) {
    raText[i] = H[i] === null || M[i] === null || S[i] === null ? null : `${H[i]} ${M[i]} ${S[i]}`;
    const sg = (SG[i] ?? "+").trim() || "+";
    decText[i] = D[i] === null || DM[i] === null || DS[i] === null ? null : `${sg}${D[i]} ${DM[i]} ${DS[i]}`;
  }
  const names = [h, m, s, sign, d, dm, ds].filter((x): x is string => x !== undefined);
  return { ra: parseAngles(raText, "ra", "h"), dec: parseAngles(decText, "dec", "deg"), names };
}

/**
 * The roles a table of ours recorded when it was written (`peculiar.roles`), for the columns it
 * still has and the roles the user did not set. They rank below --col and above detection by name,
 * so a chain of commands keeps the positions and redshifts it started with: in a joined table the
 * second catalogue's own RA/Dec columns (empty for the rows it did not observe) do not take over.
 * A step that makes a new column for a role records it (combine does for mu and mu_err).
 */
function storedRoles(table: Table, overrides: RoleMap): { roles: RoleMap; kept: string[] } {
  const recorded = getRoles(table);
  const names = new Set(table.schema.fields.map((f) => f.name));
  const roles: RoleMap = {};
  const kept: string[] = [];
  for (const [role, column] of Object.entries(recorded) as [Role, string | undefined][]) {
    if (!(ROLES as readonly string[]).includes(role) || column === undefined || column === "") continue;
    if (role in overrides || !names.has(column)) continue;
    roles[role] = column;
    kept.push(`${role} <- ${column}`);
  }
  return { roles, kept };
}

function withSchemaMetadata(table: Table, metadata: Map<string, string>): Table {
  return new Table(new Schema(table.schema.fields, metadata), table.batches);
}

/**
 * Detects roles, resolves ICRS positions, flags rows whose position is missing, not an angle or
 * out of range, and records the roles in `peculiar.roles`. Pure: the input table is not changed.
 */
export function prepareCatalogue(table: Table, options: PrepareOptions): Catalogue {
  const file = options.file;
  const stored = storedRoles(table, options.overrides ?? {});
  const { roles, notes } = detectRoles(table, { ...stored.roles, ...(options.overrides ?? {}) }, file);
  if (stored.kept.length > 0) notes.unshift(`roles kept from the file's own record: ${stored.kept.join(", ")}`);
  // the reader's notes on this file (not those of an earlier file in `previous`)
  notes.unshift(...(readJsonMeta<{ notes?: string[] }>(table, META.source)?.notes ?? []));
  const n = table.numRows;
  const units: Partial<Record<Role, string>> = {};
  for (const r of ROLES) {
    const c = roles[r];
    if (c === undefined) continue;
    // --unit ROLE=UNIT wins over the column's metadata (angles are checked below, other roles by their step)
    const u = options.units?.[r] ?? columnMeta(table, c).unit;
    if (u) units[r] = u;
  }
  const word = rowWord(table);
  const rows = sourceRows(table);
  const prior = new Prior(table);
  const bad = new Uint8Array(n);
  const reasons: (string | undefined)[] = []; // written only at flagged rows (flagRows reads those)
  let raDeg: Float64Array | undefined;
  let decDeg: Float64Array | undefined;
  let positions: Catalogue["positions"] = "none";

  const pairFrom = (lonRole: Role, latRole: Role) => {
    const lonCol = roles[lonRole]!;
    const latCol = roles[latRole]!;
    const lon = readAngles(table, lonCol, "ra", unitFor(table, lonRole, lonCol, options.units?.[lonRole], file, notes), file, lonRole, notes);
    const lat = readAngles(table, latCol, "dec", unitFor(table, latRole, latCol, options.units?.[latRole], file, notes), file, latRole, notes);
    units[lonRole] = lon.unitLabel;
    units[latRole] = lat.unitLabel;
    collect(table, lonCol, lon.col, word, rows, prior, bad, reasons);
    collect(table, latCol, lat.col, word, rows, prior, bad, reasons);
    return { lon: lon.col.deg, lat: lat.col.deg };
  };

  if (roles.ra !== undefined && roles.dec !== undefined) {
    const p = pairFrom("ra", "dec");
    raDeg = p.lon;
    decDeg = p.lat;
    positions = "radec";
  } else if (roles.ra !== undefined || roles.dec !== undefined) {
    notes.push(`${roles.ra !== undefined ? `ra <- ${roles.ra}` : `dec <- ${roles.dec}`} has no partner column; no positions`);
  }
  if (positions === "none" && roles.glon !== undefined && roles.glat !== undefined) {
    const p = pairFrom("glon", "glat");
    const icrs = convertPositions(p.lon, p.lat, "galactic", "icrs");
    raDeg = icrs.lonDeg;
    decDeg = icrs.latDeg;
    positions = "galactic";
    notes.push(`positions: ICRS from Galactic glon <- ${roles.glon}, glat <- ${roles.glat}`);
  }
  if (positions === "none" && roles.ra === undefined && roles.dec === undefined) {
    const parts = cdsParts(table);
    if (parts) {
      raDeg = parts.ra.deg;
      decDeg = parts.dec.deg;
      positions = "cds-parts";
      units.ra = "h:m:s";
      units.dec = "d:m:s";
      const raName = parts.names.filter((x) => /^ra/i.test(x)).join(" ");
      const decName = parts.names.filter((x) => /^de/i.test(x)).join(" ");
      for (let i = 0; i < n; i++) {
        for (const [name, col] of [[raName, parts.ra], [decName, parts.dec]] as const) {
          const r = col.reasons[i];
          if (r === undefined) continue;
          const finding = r === "is empty" ? `columns ${name}: missing value` : `columns ${name}: ${r}`;
          addFinding(i, finding, finding, word, rows, prior, bad, reasons);
        }
      }
      notes.push(`positions: from the sexagesimal parts ${parts.names.join(" ")}`);
    }
  }
  if (positions === "none" && n > 0) notes.push("no sky positions (no ra/dec, glon/glat or RAh..DEs columns)");
  notes.push(...redshiftScaleNotes(table, roles));

  const missing = (options.require ?? []).filter((r) => {
    if (r === "ra" || r === "dec") return positions === "none";
    return roles[r] === undefined;
  });
  if (missing.length > 0) {
    const names = table.schema.fields.map((f) => f.name).join(", ");
    throw new PeculiarError("column", `no column for ${missing.join(", ")} (name one with --col ROLE=NAME)`, {
      file,
      expected: `the columns are ${names}`,
    });
  }

  let badPositions = 0;
  for (let i = 0; i < n; i++) if (bad[i]) badPositions++;
  let out = flagRows(table, bad, reasons);
  out = withSchemaMetadata(out, setJsonMeta(out.schema.metadata, META.roles, roles));
  raDeg ??= new Float64Array(n).fill(NaN);
  decDeg ??= new Float64Array(n).fill(NaN);
  return { table: out, roles, raDeg, decDeg, units, positions, badPositions, notes, file };
}

/**
 * A note when a redshift column reads like the other kind: z above 20 (no galaxy in a velocity
 * survey; such values are cz in km/s), or cz never above 2 km/s in size (such values are z).
 * Only a note: the column keeps its role unless --col says otherwise.
 */
function redshiftScaleNotes(table: Table, roles: RoleMap): string[] {
  const out: string[] = [];
  const extent = (col: string): number => {
    let m = -Infinity;
    const v: ArrayLike<number> = valuesView(table, col, "float64") ?? valuesView(table, col, "int32") ?? float64Column(table, col);
    for (let i = 0; i < v.length; i++) {
      const x = Math.abs(v[i]!);
      if (x === x && x !== Infinity && x > m) m = x;
    }
    return m;
  };
  if (roles.z && hasColumn(table, roles.z)) {
    const m = extent(roles.z);
    if (m > 20) out.push(`z <- ${roles.z} has values up to ${Number(m.toPrecision(6))}: that reads like cz in km/s (name it with --col cz=${roles.z})`);
  }
  if (roles.cz && hasColumn(table, roles.cz)) {
    const m = extent(roles.cz);
    if (m > 0 && m < 2) out.push(`cz <- ${roles.cz} is never above ${Number(m.toPrecision(6))} in size: that reads like z (name it with --col z=${roles.cz})`);
  }
  return out;
}

/** readTable + prepareCatalogue. */
export async function loadCatalogue(path: string, options: LoadOptions = {}): Promise<Catalogue> {
  const read: { format?: FormatName; hdu?: number | string } = {};
  if (options.format !== undefined) read.format = options.format;
  if (options.hdu !== undefined) read.hdu = options.hdu;
  const table = await (options.table ?? readTable(path, read));
  const prep: PrepareOptions = { file: path };
  if (options.overrides) prep.overrides = options.overrides;
  if (options.units) prep.units = options.units;
  if (options.require) prep.require = options.require;
  return prepareCatalogue(table, prep);
}
