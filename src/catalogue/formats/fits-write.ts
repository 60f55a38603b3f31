/**
 * Writes a table as a FITS file: an empty primary HDU and one BINTABLE (rules in fits.ts and
 * DEVELOPERS.md, "Catalogue formats").
 */
import type { Table } from "apache-arrow";
import { columnsOf, type ColumnData, type ColumnKind } from "../columns.js";
import { META } from "../meta.js";
import { PeculiarError } from "../../errors.js";
import { BLOCK, bytesToBase64, headerBytes, longStringCards, valueCard } from "./fits-header.js";
import { CODE_BYTES, TWO63 } from "./fits.js";
interface Plan {
  col: ColumnData;
  tform: string;
  width: number;
  tnull?: bigint;
  tzero?: bigint;
  write: (view: DataView, u8: Uint8Array, p: number, i: number) => void;
}

/** Stored-integer ranges of B, I, J, K. */
const RANGE: Record<string, [bigint, bigint]> = {
  B: [0n, 255n],
  I: [-32768n, 32767n],
  J: [-2147483648n, 2147483647n],
  K: [-TWO63, TWO63 - 1n],
};

/** The stored type for an integer kind, its TZERO, and the next wider choice when no TNULL is free. */
const INT_PLAN: Partial<Record<ColumnKind, { code: string; zero: bigint; wider?: ColumnKind }>> = {
  int8: { code: "B", zero: -128n, wider: "int16" },
  uint8: { code: "B", zero: 0n, wider: "int16" },
  int16: { code: "I", zero: 0n, wider: "int32" },
  uint16: { code: "I", zero: 32768n, wider: "int32" },
  int32: { code: "J", zero: 0n, wider: "int64" },
  uint32: { code: "J", zero: 2147483648n, wider: "int64" },
  int64: { code: "K", zero: 0n },
  uint64: { code: "K", zero: TWO63 },
};

function planInteger(col: ColumnData, kind: ColumnKind, file: string | undefined): Plan {
  const p = INT_PLAN[kind]!;
  const n = col.values.length;
  const src = col.values as ArrayLike<number | bigint>;
  const stored = (i: number): bigint => BigInt(src[i]!) - p.zero;
  let tnull: bigint | undefined;
  if (col.nulls?.some((x) => x === 1)) {
    const [lo, hi] = RANGE[p.code]!;
    const used = new Set<bigint>();
    for (let i = 0; i < n; i++) if (!col.nulls[i]) used.add(stored(i));
    const first = p.code === "B" ? hi : lo;
    if (!used.has(first)) tnull = first;
    else {
      for (let c = lo; c <= hi && tnull === undefined; c++) if (!used.has(c)) tnull = c;
    }
    if (tnull === undefined) {
      if (!p.wider) throw new PeculiarError("input", "no free integer for TNULL", { file, column: col.name });
      return planInteger(col, p.wider, file);
    }
  }
  const width = CODE_BYTES[p.code]!;
  const t = tnull;
  const write = (view: DataView, _u8: Uint8Array, at: number, i: number) => {
    const s = col.nulls?.[i] ? t! : stored(i);
    if (p.code === "B") view.setUint8(at, Number(s));
    else if (p.code === "I") view.setInt16(at, Number(s), false);
    else if (p.code === "J") view.setInt32(at, Number(s), false);
    else view.setBigInt64(at, s, false);
  };
  const plan: Plan = { col, tform: `1${p.code}`, width, write };
  if (t !== undefined) plan.tnull = t;
  if (p.zero !== 0n) plan.tzero = p.zero;
  return plan;
}

function planColumn(col: ColumnData, file: string | undefined): Plan {
  const isNull = (i: number) => col.nulls?.[i] === 1;
  switch (col.kind) {
    case "float64": {
      const v = col.values as Float64Array;
      return { col, tform: "1D", width: 8, write: (view, _u, at, i) => view.setFloat64(at, isNull(i) ? NaN : v[i]!, false) };
    }
    case "float32": {
      const v = col.values as Float32Array;
      return { col, tform: "1E", width: 4, write: (view, _u, at, i) => view.setFloat32(at, isNull(i) ? NaN : v[i]!, false) };
    }
    case "bool": {
      const v = col.values as Uint8Array;
      return { col, tform: "1L", width: 1, write: (_v, u8, at, i) => void (u8[at] = isNull(i) ? 0 : v[i] ? 0x54 : 0x46) };
    }
    case "utf8": {
      const enc = new TextEncoder();
      const encoded = (col.values as string[]).map((s, i) => (isNull(i) ? new Uint8Array(0) : enc.encode(s)));
      let width = 1;
      for (const b of encoded) if (b.length > width) width = b.length;
      return { col, tform: `${width}A`, width, write: (_v, u8, at, i) => u8.set(encoded[i]!, at) };
    }
    default:
      return planInteger(col, col.kind, file);
  }
}

const RESERVED = /^(SIMPLE|BITPIX|NAXIS\d*|EXTEND|XTENSION|PCOUNT|GCOUNT|TFIELDS|THEAP|EXTNAME|EXTVER|END|COMMENT|HISTORY|CONTINUE|BLANK|BSCALE|BZERO|GROUPS|T[A-Z]{3,4}\d+|PMETA\d+|PMVAL\d+|PMENC\d+)$/;

/** Encodes a table as a FITS file: empty primary HDU plus one BINTABLE. */
/** The most columns a FITS binary table holds (TFIELDS: FITS Standard 4.0, sect. 7.3.1). */
export const FITS_MAX_COLUMNS = 999;

export function fitsFromTable(table: Table, options: { file?: string } = {}): Uint8Array {
  const width = table.schema.fields.length;
  if (width > FITS_MAX_COLUMNS) {
    throw new PeculiarError("format", `a FITS binary table holds at most ${FITS_MAX_COLUMNS} columns; this table has ${width} (write Arrow, VOTable or CSV instead)`, options.file ? { file: options.file } : {});
  }
  const cols = columnsOf(table);
  const n = table.numRows;
  const plans = cols.map((c) => planColumn(c, options.file));
  const rowBytes = plans.reduce((s, p) => s + p.width, 0);
  const cards: string[] = [
    valueCard("XTENSION", "BINTABLE", "binary table extension"),
    valueCard("BITPIX", 8, "8-bit bytes"),
    valueCard("NAXIS", 2, "2-dimensional table"),
    valueCard("NAXIS1", rowBytes, "bytes per row"),
    valueCard("NAXIS2", n, "rows"),
    valueCard("PCOUNT", 0, "no heap"),
    valueCard("GCOUNT", 1, "one group"),
    valueCard("TFIELDS", plans.length, "columns"),
  ];
  plans.forEach((p, k) => {
    const j = k + 1;
    cards.push(...longStringCards(`TTYPE${j}`, p.col.name, p.col.meta?.description ?? ""));
    cards.push(valueCard(`TFORM${j}`, p.tform));
    if (p.col.meta?.unit) cards.push(...longStringCards(`TUNIT${j}`, p.col.meta.unit));
    if (p.tnull !== undefined) cards.push(valueCard(`TNULL${j}`, p.tnull));
    if (p.tzero !== undefined) {
      cards.push(valueCard(`TSCAL${j}`, 1));
      cards.push(valueCard(`TZERO${j}`, p.tzero));
    }
  });
  cards.push(valueCard("EXTNAME", "CATALOGUE", "written by peculiar"));
  // Settings, one keyword each, for people reading the header.
  const settings = table.schema.metadata.get(META.settings);
  if (settings) {
    try {
      const obj = JSON.parse(settings) as Record<string, unknown>;
      const seen = new Set<string>();
      for (const [key, value] of Object.entries(obj)) {
        const kw = key.toUpperCase().replace(/[^A-Z0-9_-]/g, "_").slice(0, 8);
        if (kw === "" || RESERVED.test(kw) || seen.has(kw)) continue;
        if (typeof value !== "number" && typeof value !== "string" && typeof value !== "boolean") continue;
        if (typeof value === "number" && !Number.isFinite(value)) continue;
        seen.add(kw);
        if (typeof value === "string") cards.push(...longStringCards(kw, value, `${META.settings} ${key}`));
        else cards.push(valueCard(kw, value, `${META.settings} ${key}`));
      }
    } catch {
      // not JSON: kept below as PMVAL only
    }
  }
  // Every schema metadata entry, exactly.
  let k = 0;
  for (const [key, value] of table.schema.metadata) {
    k++;
    cards.push(...longStringCards(`PMETA${k}`, key));
    if (/^[\x20-\x7e]*$/.test(value)) cards.push(...longStringCards(`PMVAL${k}`, value));
    else {
      cards.push(...longStringCards(`PMVAL${k}`, bytesToBase64(new TextEncoder().encode(value))));
      cards.push(valueCard(`PMENC${k}`, "base64"));
    }
  }
  const primary = headerBytes([
    valueCard("SIMPLE", true, "conforms to FITS Standard 4.0"),
    valueCard("BITPIX", 8),
    valueCard("NAXIS", 0, "no data in the primary HDU"),
    valueCard("EXTEND", true, "extensions follow"),
  ]);
  const ext = headerBytes(cards);
  const dataBytes = rowBytes * n;
  const data = new Uint8Array(Math.ceil(dataBytes / BLOCK) * BLOCK);
  const view = new DataView(data.buffer);
  let p = 0;
  for (let i = 0; i < n; i++) {
    for (const plan of plans) {
      plan.write(view, data, p, i);
      p += plan.width;
    }
  }
  const out = new Uint8Array(primary.length + ext.length + data.length);
  out.set(primary, 0);
  out.set(ext, primary.length);
  out.set(data, primary.length + ext.length);
  return out;
}
