/**
 * The body of a CSV/TSV table whose every cell is a plain number or empty, read straight into one
 * typed column per field: no cell spans, no second pass. This is the common shape of a catalogue
 * body (positions, redshifts, distances); csv.ts tries it first and, at the first cell that is
 * anything else (text, a quote, blanks around a value, a row of the wrong width, an integer beyond
 * int32), gives up and reads the file with the general rules (csv-records.ts), which give the same
 * table for the files read here. Numbers are read by decimal.ts (the same digits give the same
 * double as on the general path).
 */
import { decodeSpan, grow } from "./csv-records.js";
import { INTEGER, scanKind, scanNumberPrefix, scanned } from "./decimal.js";

export interface NumericBody {
  rows: number;
  /** Per field: the values (0 where null), the row count long. */
  values: Float64Array[];
  /** Per field: 1 when every non-null cell was an integer (no point, no exponent). */
  integer: Uint8Array;
  /** Per field: 1 where the cell was empty, or null when none was. */
  nulls: (Uint8Array | null)[];
  /** Per row: its 1-based line in the file. */
  lines: Int32Array;
  /** Per row: where its line starts and ends (before the line end) in the bytes; null for bytes past 4 GiB. */
  starts: Uint32Array | null;
  ends: Uint32Array | null;
}

const INT32_MIN = -2147483648;
const INT32_MAX = 2147483647;

/**
 * Reads the records from byte `start` (the first data line, which is line `line`) with `width`
 * fields separated by `delim` (not a space, nor a character of a number), or returns null when a
 * cell or line is not of the plain numeric shape.
 */
export function readNumericBody(b: Uint8Array, start: number, line: number, delim: number, width: number): NumericBody | null {
  const n = b.length;
  // Rows guessed from the length of the first lines, then doubled as needed.
  let sample = 0;
  let seen = 0;
  for (let t = start; t < n && seen < 64; t++) if (b[t] === 10) (seen++, (sample = t - start + 1));
  let cap = seen > 0 ? Math.ceil(((n - start) / sample) * seen * 1.02) + 16 : 16;
  let values: Float64Array[] = [];
  for (let j = 0; j < width; j++) values.push(new Float64Array(cap));
  let lines: Int32Array = new Int32Array(cap);
  const spans = n < 2 ** 32;
  let starts = new Uint32Array(spans ? cap : 0);
  let ends = new Uint32Array(spans ? cap : 0);
  const nulls: (Uint8Array | null)[] = new Array<Uint8Array | null>(width).fill(null);
  const integer = new Uint8Array(width).fill(1);
  const wide = new Uint8Array(width); // an integer beyond int32 was seen
  let rows = 0;
  let i = start;
  while (i < n) {
    const c0 = b[i]!;
    if (c0 === 10 || c0 === 13) {
      // an empty line: skipped, but counted
      i += c0 === 13 && b[i + 1] === 10 ? 2 : 1;
      line++;
      continue;
    }
    if (c0 === 35 /* # */) {
      while (i < n && b[i] !== 10 && b[i] !== 13) i++;
      continue; // its line end is the empty-line case above
    }
    if (rows === cap) {
      cap *= 2;
      values = values.map((v) => grow(v, cap));
      lines = grow(lines, cap);
      if (spans) {
        starts = grow(starts, cap);
        ends = grow(ends, cap);
      }
      for (let j = 0; j < width; j++) if (nulls[j]) nulls[j] = grow(nulls[j]!, cap);
    }
    if (spans) starts[rows] = i;
    for (let j = 0; j < width; j++) {
      const last = j === width - 1;
      const c = i < n ? b[i]! : 10;
      if (c === delim || c === 10 || c === 13) {
        // empty cell: null (the general rules' "" token)
        if (c !== delim ? !last : last) return null;
        (nulls[j] ??= new Uint8Array(cap))[rows] = 1;
      } else {
        const e = scanNumberPrefix(b, i, n);
        if (e < 0) return null;
        const t = e < n ? b[e]! : 10;
        if (last ? t !== 10 && t !== 13 : t !== delim) return null;
        let x = scanned[0]!;
        const isInt = scanKind[0] === INTEGER;
        if (x !== x) {
          // a number decimal.ts leaves to Number() (many digits, a far exponent, a close call)
          const text = decodeSpan(b, i, e);
          x = Number(isInt ? text : text.replace(/[dD]/, "e"));
        }
        if (!isInt) integer[j] = 0;
        else if (x < INT32_MIN || x > INT32_MAX) wide[j] = 1;
        values[j]![rows] = x;
        i = e;
      }
      if (!last) i++; // past the delimiter
    }
    // the line end (or the end of the file)
    if (spans) ends[rows] = i;
    if (i < n) i += b[i] === 13 && b[i + 1] === 10 ? 2 : 1;
    lines[rows++] = line++;
  }
  for (let j = 0; j < width; j++) {
    if (integer[j] && wide[j]) return null; // an int64 column needs the exact digits: general rules
    values[j] = values[j]!.subarray(0, rows);
    if (nulls[j]) nulls[j] = nulls[j]!.subarray(0, rows);
  }
  return { rows, values, integer, nulls, lines: lines.subarray(0, rows), starts: spans ? starts.subarray(0, rows) : null, ends: spans ? ends.subarray(0, rows) : null };
}
