/**
 * The header of ECSV files (Astropy APE 6, "ECSV 1.0"): `# %ECSV 1.0`, `# ---`, then YAML with
 * `datatype:` (one entry per column: name, datatype, unit, description), optional `delimiter:`
 * (space by default) and `meta:`. Only the subset astropy writes for plain columns is read: list
 * entries in flow style `- {name: ra, unit: deg, datatype: float64}` or block style
 * (`- name: ra` then indented `key: value` lines). `meta:` is kept as its YAML text.
 */
import type { ColumnKind } from "../columns.js";
import { PeculiarError } from "../../errors.js";

export interface EcsvColumn {
  name: string;
  datatype: string;
  unit?: string;
  description?: string;
  subtype?: string;
}

export interface EcsvHeader {
  delimiter: string;
  columns: EcsvColumn[];
  /** The `meta:` block as YAML text ("" when absent). */
  meta: string;
}

/** Kinds for ECSV datatypes; others (complex, object, arrays via subtype) stay text. */
export function ecsvKind(c: EcsvColumn): ColumnKind {
  if (c.subtype) return "utf8";
  switch (c.datatype) {
    case "bool":
      return "bool";
    case "int8":
    case "int16":
    case "int32":
    case "int64":
    case "uint8":
    case "uint16":
    case "uint32":
    case "uint64":
    case "float32":
    case "float64":
      return c.datatype;
    case "float16":
      return "float32";
    case "float128":
      return "float64";
    default:
      return "utf8";
  }
}

export function isEcsv(text: string): boolean {
  return /^\uFEFF?# %ECSV /.test(text);
}

function unquote(s: string): string {
  const t = s.trim();
  if (t.length >= 2 && ((t.startsWith("'") && t.endsWith("'")) || (t.startsWith('"') && t.endsWith('"')))) {
    const inner = t.slice(1, -1);
    return t.startsWith("'") ? inner.replace(/''/g, "'") : inner.replace(/\\"/g, '"').replace(/\\\\/g, "\\");
  }
  return t;
}

/** Splits `a: 1, b: 'x, y'` at top-level commas, keeping quoted parts whole. */
function splitFlow(s: string): string[] {
  const parts: string[] = [];
  let cur = "";
  let q: string | null = null;
  let depth = 0;
  for (const ch of s) {
    if (q) {
      cur += ch;
      if (ch === q) q = null;
    } else if (ch === "'" || ch === '"') {
      q = ch;
      cur += ch;
    } else if (ch === "{" || ch === "[") {
      depth++;
      cur += ch;
    } else if (ch === "}" || ch === "]") {
      depth--;
      cur += ch;
    } else if (ch === "," && depth === 0) {
      parts.push(cur);
      cur = "";
    } else cur += ch;
  }
  if (cur.trim() !== "") parts.push(cur);
  return parts;
}

function keyValue(s: string): [string, string] | undefined {
  const m = /^\s*([A-Za-z_][\w-]*)\s*:\s?(.*)$/.exec(s);
  return m ? [m[1]!, unquote(m[2]!)] : undefined;
}

function toColumn(map: Record<string, string>, file: string): EcsvColumn {
  if (map.name === undefined || map.datatype === undefined) throw new PeculiarError("format", "ECSV header: a datatype entry without name or datatype", { file });
  const c: EcsvColumn = { name: map.name, datatype: map.datatype };
  if (map.unit) c.unit = map.unit;
  if (map.description) c.description = map.description;
  if (map.subtype) c.subtype = map.subtype;
  return c;
}

/** Parses the header from the comment lines at the top of the file (with their `# `). */
export function parseEcsvHeader(lines: string[], file: string): EcsvHeader {
  const yaml = lines.map((l) => l.replace(/^#( |$)/, ""));
  if (!/^%ECSV \d/.test(yaml[0] ?? "")) throw new PeculiarError("format", "not an ECSV header", { file });
  const header: EcsvHeader = { delimiter: " ", columns: [], meta: "" };
  let section = "";
  let block: Record<string, string> | null = null;
  const metaLines: string[] = [];
  const flush = () => {
    if (block) header.columns.push(toColumn(block, file));
    block = null;
  };
  for (const line of yaml.slice(1)) {
    if (line.trim() === "---" || line.trim() === "") continue;
    const top = /^([A-Za-z_]\w*):\s*(.*)$/.exec(line);
    if (top) {
      flush();
      section = top[1]!;
      if (section === "delimiter") header.delimiter = unquote(top[2]!);
      if (section === "meta" && top[2]!.trim() !== "" && top[2]!.trim() !== "!!omap") metaLines.push(top[2]!);
      continue;
    }
    if (section === "meta") {
      metaLines.push(line);
      continue;
    }
    if (section !== "datatype") continue;
    const item = /^\s*-\s+(.*)$/.exec(line);
    if (item) {
      flush();
      const body = item[1]!.trim();
      if (body.startsWith("{")) {
        const map: Record<string, string> = {};
        for (const part of splitFlow(body.replace(/^\{/, "").replace(/\}$/, ""))) {
          const kv = keyValue(part);
          if (kv) map[kv[0]] = kv[1];
        }
        header.columns.push(toColumn(map, file));
      } else {
        block = {};
        const kv = keyValue(body);
        if (kv) block[kv[0]] = kv[1];
      }
      continue;
    }
    if (block) {
      const kv = keyValue(line);
      if (kv) block[kv[0]] = kv[1];
    }
  }
  flush();
  if (header.delimiter !== " " && header.delimiter !== ",") throw new PeculiarError("format", `ECSV delimiter must be space or comma`, { file, value: header.delimiter });
  header.meta = metaLines.join("\n");
  return header;
}
