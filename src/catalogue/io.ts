/**
 * Reading and writing catalogues: the format comes from the file extension unless given, a read
 * returns the Arrow table with the bookkeeping columns (valid, invalid_reason, source_row) and
 * `peculiar.source`, a write encodes everything in memory first and then lands atomically.
 */
import { readFileSync } from "node:fs";
import { stat } from "node:fs/promises";
import { extname } from "node:path";
import { gunzipSync, gzipSync } from "node:zlib";
import type { Table } from "apache-arrow";
import { PeculiarError } from "../errors.js";
import { assertNotSameFile, writeFileAtomic } from "./atomic.js";
import { arrowChunks, arrowFromTable, parseArrowColumns } from "./formats/arrow.js";
import { parseCsvBytes } from "./formats/csv.js";
import { csvBytes, type CsvWriteOptions } from "./formats/csv-write.js";
import type { RowText } from "./line-text.js";
import { csvChunksThreaded } from "./csv-threads.js";
import { parseFitsColumns } from "./formats/fits.js";
import { fitsFromTable } from "./formats/fits-write.js";
import { finishTable, type ParsedColumns, type SourceInfo } from "./formats/table.js";
import { parseVOTableColumns } from "./formats/votable.js";
import { votableFromTable } from "./formats/votable-write.js";

export { assertNotSameFile, assertOutputs, writeFileAtomic } from "./atomic.js";
export { parseCsv, NULL_TOKENS } from "./formats/csv.js";
export { csvFromTable } from "./formats/csv-write.js";
export { parseArrow, arrowFromTable } from "./formats/arrow.js";
export { parseFits } from "./formats/fits.js";
export { fitsFromTable } from "./formats/fits-write.js";
export { parseVOTable, VOTABLE_INFOS, VOTABLE_PARAMS } from "./formats/votable.js";
export { votableFromTable } from "./formats/votable-write.js";

export type FormatName = "csv" | "tsv" | "votable" | "fits" | "arrow";
export const FORMAT_NAMES: readonly FormatName[] = ["csv", "tsv", "votable", "fits", "arrow"];

/** Extensions (lower case) and their formats. `.tab` is tab-separated; `.txt` is tab, comma or blank separated (sniffDelimiter). */
const EXTENSIONS: Record<string, FormatName> = {
  ".csv": "csv",
  ".tsv": "tsv",
  ".tab": "tsv",
  ".txt": "tsv",
  ".vot": "votable",
  ".votable": "votable",
  ".xml": "votable",
  ".fits": "fits",
  ".fit": "fits",
  ".fts": "fits",
  ".arrow": "arrow",
  ".feather": "arrow",
  ".ipc": "arrow",
  ".arrows": "arrow",
};

/** The extension that names the format: `.csv` for `a.csv` and for `a.csv.gz`. */
function formatExtension(path: string): string {
  const ext = extname(path).toLowerCase();
  return ext === ".gz" ? extname(path.slice(0, -3)).toLowerCase() : ext;
}

/** True when the path ends in `.gz`: writeTable gzips, readTable also finds gzip by its magic bytes. */
export function isGzipPath(path: string): boolean {
  return extname(path).toLowerCase() === ".gz";
}

export function formatFromPath(path: string): FormatName {
  const ext = formatExtension(path);
  const f = EXTENSIONS[ext];
  if (!f) {
    throw new PeculiarError("format", `unknown file format ${ext ? `"${ext}"` : "(no extension)"}; name the format (--format for an input, --out-format for an output) or use one of the extensions ${Object.keys(EXTENSIONS).join(" ")} (each also with .gz)`, { file: path });
  }
  return f;
}

/** Parses a format name given by the user (e.g. --format). */
export function parseFormatName(name: string): FormatName {
  const f = name.toLowerCase();
  if ((FORMAT_NAMES as readonly string[]).includes(f)) return f as FormatName;
  throw new PeculiarError("usage", `unknown format "${name}"`, { expected: FORMAT_NAMES.join(", ") });
}

export interface ReadOptions {
  format?: FormatName;
  /** FITS: the HDU to read, by number (0 = primary) or EXTNAME (default: the first BINTABLE).
   *  VOTable: the TABLE, by number (0 = first) or name/ID (default: the first). */
  hdu?: number | string;
  /** CSV/TSV: override the field separator. */
  delimiter?: string;
}

export interface WriteOptions {
  format?: FormatName;
  /** The file the table was read from: writing over it is refused (see assertNotSameFile). */
  input?: string;
  /** Arrow: write the stream format (default for `.arrows`, else the file format). */
  stream?: boolean;
  /** CSV/TSV: column blocks written as the lines they were read from (csv-write.ts, line-text.ts). */
  rowText?: RowText[];
}

async function readBytes(path: string): Promise<Uint8Array> {
  let size: number;
  try {
    const s = await stat(path);
    if (s.isDirectory()) throw new PeculiarError("io", "is a folder, not a file", { file: path });
    size = s.size;
  } catch (e) {
    if (e instanceof PeculiarError) throw e;
    const code = (e as NodeJS.ErrnoException).code;
    throw new PeculiarError("io", code === "ENOENT" ? "no such file" : `cannot read: ${(e as Error).message}`, { file: path }, { cause: e });
  }
  if (size === 0) throw new PeculiarError("format", "empty file", { file: path });
  try {
    // one blocking read: the caller waits for the table anyway, and async reads go in 512 KiB round trips
    // to the thread pool that cost a wake-up each (0.2-0.3 s for 44 MB when both cores are busy)
    const raw = plainBytes(readFileSync(path));
    return raw[0] === 0x1f && raw[1] === 0x8b ? gunzip(raw, path) : raw;
  } catch (e) {
    if (e instanceof PeculiarError) throw e;
    throw new PeculiarError("io", `cannot read: ${(e as Error).message}`, { file: path }, { cause: e });
  }
}

/** A Buffer's bytes as a plain Uint8Array over the same memory (no copy; `slice` copies again). */
function plainBytes(b: Buffer): Uint8Array {
  return new Uint8Array(b.buffer, b.byteOffset, b.byteLength);
}

function gunzip(raw: Uint8Array, path: string): Uint8Array {
  let out: Uint8Array;
  try {
    out = plainBytes(gunzipSync(raw));
  } catch (e) {
    throw new PeculiarError("format", `truncated or damaged gzip data: ${(e as Error).message}`, { file: path }, { cause: e });
  }
  if (out.length === 0) throw new PeculiarError("format", "empty file (after gzip)", { file: path });
  return out;
}

/**
 * UTF-8 bytes of a CSV/TSV file, byte-order mark dropped: UTF-8 as it is, UTF-16 with its
 * byte-order mark re-encoded; NUL bytes mean binary data, only blanks an empty file.
 */
function textBytes(bytes: Uint8Array, file: string): Uint8Array {
  let out: Uint8Array;
  if (bytes[0] === 0xff && bytes[1] === 0xfe) out = new TextEncoder().encode(new TextDecoder("utf-16le").decode(bytes.subarray(2)));
  else if (bytes[0] === 0xfe && bytes[1] === 0xff) out = new TextEncoder().encode(new TextDecoder("utf-16be").decode(bytes.subarray(2)));
  else if (bytes.subarray(0, 65536).includes(0)) {
    throw new PeculiarError("format", "binary data, not a text table (a FITS or Arrow file? give its extension or --format)", { file });
  } else out = bytes[0] === 0xef && bytes[1] === 0xbb && bytes[2] === 0xbf ? bytes.subarray(3) : bytes;
  if (onlyBlank(out)) throw new PeculiarError("format", "empty file (only blank space)", { file });
  return out;
}

/** True when the UTF-8 bytes hold nothing but blank space (String.prototype.trim's blanks). */
function onlyBlank(b: Uint8Array): boolean {
  for (let i = 0; i < b.length; i++) {
    const c = b[i]!;
    if (c >= 0x80) return new TextDecoder("utf-8").decode(b).trim() === "";
    if (c !== 32 && (c < 9 || c > 13)) return false;
  }
  return true;
}

/** Parses bytes already in memory as `format`; `file` names the source in messages and metadata. */
export function parseTable(bytes: Uint8Array, format: FormatName, options: { file: string; hdu?: number | string; delimiter?: string }): Table {
  const file = options.file;
  let parsed: ParsedColumns;
  let info: SourceInfo = { file, format };
  switch (format) {
    case "csv":
    case "tsv": {
      parsed = parseCsvBytes(textBytes(bytes, file), { file, delimiter: options.delimiter ?? (format === "tsv" ? "\t" : ",") });
      break;
    }
    case "arrow":
      parsed = parseArrowColumns(bytes, { file });
      break;
    case "fits": {
      const o: { file: string; hdu?: number | string } = { file };
      if (options.hdu !== undefined) o.hdu = options.hdu;
      ({ parsed, info } = parseFitsColumns(bytes, o));
      break;
    }
    case "votable":
      ({ parsed, info } = parseVOTableColumns(bytes, options.hdu === undefined ? { file } : { file, table: options.hdu }));
      break;
  }
  return finishTable(parsed, info);
}

/**
 * The separator of a `.txt` table: tab if its first line that is not a comment or blank has one,
 * else comma if it has one, else blanks (a run of spaces is one separator).
 */
export function sniffDelimiter(bytes: Uint8Array): string {
  const head = new TextDecoder("utf-8").decode(bytes.subarray(0, 65536));
  for (const line of head.split(/\r\n|\n|\r/)) {
    const t = line.trim();
    if (t === "" || t.startsWith("#")) continue;
    return line.includes("\t") ? "\t" : line.includes(",") ? "," : " ";
  }
  return "\t";
}

export async function readTable(path: string, options: ReadOptions = {}): Promise<Table> {
  const format = options.format ?? formatFromPath(path);
  const bytes = await readBytes(path);
  const o: { file: string; hdu?: number | string; delimiter?: string } = { file: path };
  if (options.hdu !== undefined) o.hdu = options.hdu;
  if (options.delimiter !== undefined) o.delimiter = options.delimiter;
  else if (options.format === undefined && formatExtension(path) === ".txt") o.delimiter = sniffDelimiter(bytes);
  return parseTable(bytes, format, o);
}

/** Encodes a table in memory as `format` (what writeTable writes). */
export function encodeTable(table: Table, format: FormatName, options: { stream?: boolean } = {}): Uint8Array | string {
  switch (format) {
    case "csv":
      return csvBytes(table);
    case "tsv":
      return csvBytes(table, { delimiter: "\t" });
    case "arrow":
      return arrowFromTable(table, { stream: options.stream ?? false });
    case "fits":
      return fitsFromTable(table);
    case "votable":
      return votableFromTable(table);
  }
}

export async function writeTable(table: Table, path: string, options: WriteOptions = {}): Promise<void> {
  if (options.input !== undefined) assertNotSameFile(options.input, path);
  const format: FormatName = options.format ?? formatFromPath(path);
  const stream = options.stream ?? formatExtension(path) === ".arrows";
  let data: Uint8Array | string | Iterable<Uint8Array> | AsyncIterable<Uint8Array>;
  try {
    // CSV/TSV goes to the file chunk by chunk as it is encoded (never the whole text at once), the
    // second half of a large table formatted on a helper thread meanwhile unless its cells are mostly
    // lines copied from the input (csv-threads.ts).
    const text = format === "csv" || format === "tsv";
    if (text && !isGzipPath(path)) {
      const o: CsvWriteOptions = format === "tsv" ? { delimiter: "\t" } : {};
      if (options.rowText) o.rowText = options.rowText;
      data = csvChunksThreaded(table, o);
    } else data = format === "arrow" && !isGzipPath(path) ? arrowChunks(table, { stream }) : encodeTable(table, format, { stream });
  } catch (e) {
    if (e instanceof PeculiarError && e.place.file === undefined) throw new PeculiarError(e.code, e.message, { file: path }, { cause: e });
    throw e;
  }
  await writeFileAtomic(path, isGzipPath(path) ? gzipSync(typeof data === "string" ? new TextEncoder().encode(data) : (data as Uint8Array)) : data);
}
