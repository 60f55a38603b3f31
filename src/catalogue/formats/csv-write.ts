/**
 * Writes a table as CSV/TSV text (rules in csv.ts and DEVELOPERS.md, "Catalogue formats").
 */
import type { Table } from "apache-arrow";
import { columnsOf } from "../columns.js";
import { NULL_TOKENS, UNITS_MARKER } from "./csv.js";
import { formatFloat } from "./table.js";

export interface CsvWriteOptions {
  delimiter?: string;
}

const NEEDS_QUOTES_RE = /["\r\n]|^\s|\s$|^#/;

function quote(s: string, delim: string, text: boolean): string {
  if (s === "" || NEEDS_QUOTES_RE.test(s) || s.includes(delim) || (text && NULL_TOKENS.has(s))) return `"${s.replace(/"/g, '""')}"`;
  return s;
}

/**
 * Writes a table as CSV/TSV text: header, a units row (after the marker comment) when any column
 * has a unit, booleans as true/false, nulls as empty fields, empty strings as `""`, numbers in
 * their shortest round-trip form.
 */
export function csvFromTable(table: Table, options: CsvWriteOptions = {}): string {
  const delim = options.delimiter ?? ",";
  const cols = columnsOf(table);
  const n = table.numRows;
  // A one-column table would write a null as a blank line, which reads as no row: write NaN there.
  const nullText = cols.length === 1 ? "NaN" : "";
  const cellText: string[][] = cols.map((c) => {
    const out = new Array<string>(n);
    const nulls = c.nulls;
    const v = c.values;
    for (let i = 0; i < n; i++) {
      if (nulls?.[i]) {
        out[i] = nullText;
        continue;
      }
      switch (c.kind) {
        case "utf8":
          out[i] = quote((v as string[])[i]!, delim, true);
          break;
        case "bool":
          out[i] = (v as Uint8Array)[i] ? "true" : "false";
          break;
        case "float64":
          out[i] = formatFloat((v as Float64Array)[i]!);
          break;
        case "float32":
          out[i] = formatFloat((v as Float32Array)[i]!, true);
          break;
        default:
          out[i] = String((v as ArrayLike<number | bigint>)[i]);
      }
    }
    return out;
  });
  const lines: string[] = [];
  const anyUnit = cols.some((c) => c.meta?.unit);
  if (anyUnit) lines.push(UNITS_MARKER);
  lines.push(cols.map((c) => quote(c.name, delim, false)).join(delim));
  if (anyUnit) lines.push(cols.map((c) => (c.meta?.unit ? quote(c.meta.unit, delim, false) : "")).join(delim));
  const row = new Array<string>(cols.length);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < cols.length; j++) row[j] = cellText[j]![i]!;
    lines.push(row.join(delim));
  }
  return lines.join("\n") + "\n";
}
