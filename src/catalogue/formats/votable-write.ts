/**
 * Writes a table as VOTable 1.4 TABLEDATA (rules in votable.ts and DEVELOPERS.md, "Catalogue formats").
 */
import type { Table } from "apache-arrow";
import { columnsOf, type ColumnData } from "../columns.js";
import { META } from "../meta.js";
import { formatFloat } from "./table.js";
import { settingText, VOTABLE_INFOS, VOTABLE_PARAMS } from "./votable.js";
function xmlText(s: string): string {
  return s
    .replace(/[\x00-\x08\x0b\x0c\x0e-\x1f\ufffe\uffff]/g, "\ufffd")
    .replace(/&/g, "&amp;")
    .replace(/</g, "&lt;")
    .replace(/>/g, "&gt;")
    .replace(/\r/g, "&#13;");
}
function xmlAttr(s: string): string {
  return xmlText(s).replace(/"/g, "&quot;").replace(/\n/g, "&#10;").replace(/\t/g, "&#9;");
}

const UINT64_MAX_LONG = 2n ** 63n - 1n;

function datatypeOf(c: ColumnData): { datatype: string; arraysize?: string } {
  switch (c.kind) {
    case "float64":
      return { datatype: "double" };
    case "float32":
      return { datatype: "float" };
    case "int8":
    case "int16":
      return { datatype: "short" };
    case "uint8":
      return { datatype: "unsignedByte" };
    case "int32":
    case "uint16":
      return { datatype: "int" };
    case "int64":
    case "uint32":
      return { datatype: "long" };
    case "uint64": {
      const v = c.values as BigUint64Array;
      for (let i = 0; i < v.length; i++) if (!c.nulls?.[i] && v[i]! > UINT64_MAX_LONG) return { datatype: "char", arraysize: "*" };
      return { datatype: "long" };
    }
    case "bool":
      return { datatype: "boolean" };
    case "utf8": {
      const ascii = (c.values as string[]).every((s) => /^[\x00-\x7f]*$/.test(s));
      return { datatype: ascii ? "char" : "unicodeChar", arraysize: "*" };
    }
  }
}

function cellText(c: ColumnData, i: number): string {
  if (c.nulls?.[i]) return "";
  const v = c.values;
  switch (c.kind) {
    case "utf8":
      return xmlText((v as string[])[i]!);
    case "bool":
      return (v as Uint8Array)[i] ? "T" : "F";
    case "float64":
      return formatFloat((v as Float64Array)[i]!);
    case "float32":
      return formatFloat((v as Float32Array)[i]!, true);
    default:
      return String((v as ArrayLike<number | bigint>)[i]);
  }
}

/** Encodes a table as VOTable 1.4 TABLEDATA. */
export function votableFromTable(table: Table): string {
  const cols = columnsOf(table);
  const n = table.numRows;
  const out: string[] = [];
  out.push('<?xml version="1.0" encoding="UTF-8"?>');
  out.push('<VOTABLE version="1.4" xmlns="http://www.ivoa.net/xml/VOTable/v1.3" xmlns:xsi="http://www.w3.org/2001/XMLSchema-instance" xsi:schemaLocation="http://www.ivoa.net/xml/VOTable/v1.3 http://www.ivoa.net/xml/VOTable/VOTable-1.4.xsd">');
  out.push(' <RESOURCE type="results">');
  const meta = table.schema.metadata;
  let infos: { name: string; value: string; text?: string }[] = [];
  let params: Record<string, string>[] = [];
  try {
    infos = JSON.parse(meta.get(VOTABLE_INFOS) ?? "[]") as typeof infos;
    params = JSON.parse(meta.get(VOTABLE_PARAMS) ?? "[]") as typeof params;
  } catch {
    // not ours: written below as plain entries
  }
  for (const [key, value] of meta) {
    if (key === VOTABLE_INFOS || key === VOTABLE_PARAMS) continue;
    out.push(`  <INFO name="${xmlAttr(key)}" value="${xmlAttr(value)}"/>`);
  }
  for (const i of infos) out.push(`  <INFO name="${xmlAttr(i.name)}" value="${xmlAttr(i.value)}"${i.text ? `>${xmlText(i.text)}</INFO>` : "/>"}`);
  out.push(`  <TABLE name="catalogue" nrows="${n}">`);
  const settings = meta.get(META.settings);
  if (settings) {
    try {
      for (const [k, v] of Object.entries(JSON.parse(settings) as Record<string, unknown>)) {
        out.push(`   <INFO name="${xmlAttr(k)}" value="${xmlAttr(settingText(v))}"/>`);
      }
    } catch {
      // not JSON: already written whole above
    }
  }
  for (const p of params) {
    const attrs = Object.entries(p)
      .filter(([k]) => k !== "description")
      .map(([k, v]) => ` ${k}="${xmlAttr(v)}"`)
      .join("");
    const desc = (p as { description?: string }).description;
    out.push(desc ? `   <PARAM${attrs}><DESCRIPTION>${xmlText(desc)}</DESCRIPTION></PARAM>` : `   <PARAM${attrs}/>`);
  }
  for (const c of cols) {
    const { datatype, arraysize } = datatypeOf(c);
    let attrs = ` name="${xmlAttr(c.name)}" datatype="${datatype}"`;
    if (arraysize) attrs += ` arraysize="${arraysize}"`;
    if (c.meta?.unit) attrs += ` unit="${xmlAttr(c.meta.unit)}"`;
    if (c.meta?.ucd) attrs += ` ucd="${xmlAttr(c.meta.ucd)}"`;
    out.push(c.meta?.description ? `   <FIELD${attrs}><DESCRIPTION>${xmlText(c.meta.description)}</DESCRIPTION></FIELD>` : `   <FIELD${attrs}/>`);
  }
  out.push("   <DATA>");
  out.push("    <TABLEDATA>");
  const cells = new Array<string>(cols.length);
  for (let i = 0; i < n; i++) {
    for (let j = 0; j < cols.length; j++) cells[j] = `<TD>${cellText(cols[j]!, i)}</TD>`;
    out.push(`     <TR>${cells.join("")}</TR>`);
  }
  out.push("    </TABLEDATA>");
  out.push("   </DATA>");
  out.push("  </TABLE>");
  out.push(" </RESOURCE>");
  out.push("</VOTABLE>");
  return out.join("\n") + "\n";
}
