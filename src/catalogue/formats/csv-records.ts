/**
 * The bytes of a CSV/TSV table cut into records and cells, kept as byte spans (no JS string per
 * cell): the column builder in csv.ts reads numbers straight from the spans and decodes only the
 * cells it keeps as text. Rules (csv.ts has them all): RFC 4180 quoting, `#` comment lines and
 * blank lines skipped but counted, unquoted cells trimmed, a run of blanks one separator when the
 * delimiter is a space.
 */
/** Cell flag: the cell was quoted. */
export const QUOTED = 1;
/** Cell flags: an unquoted integer / other number, read while splitting; its value is in cellValue
 *  (NaN: ask Number()). */
export const NUMBER_INT = 4;
export const NUMBER_DEC = 8;
/** Cell flag: the value is not its span (doubled quotes, text after the closing quote, a non-ASCII
 *  blank at an edge) and lives in `special`. */
export const SPECIAL = 2;

import { DECIMAL, scanKind, scanNumberPrefix, scanned } from "./decimal.js";

const decoder = new TextDecoder("utf-8");

/** a itself when it holds `size` values, else a copy in an array of max(size, twice its length). */
export function grow<T extends Uint32Array | Int32Array | Uint8Array | Float64Array>(a: T, size: number): T {
  if (size <= a.length) return a;
  const b = new (a.constructor as new (n: number) => T)(Math.max(size, a.length * 2));
  b.set(a);
  return b;
}

/** ASCII blanks String.prototype.trim removes: tab, LF, VT, FF, CR, space. */
function isBlank(c: number): boolean {
  return c === 32 || (c >= 9 && c <= 13);
}

/** UTF-8 text of bytes[s, e); short ASCII without a decoder call. */
export function decodeSpan(b: Uint8Array, s: number, e: number): string {
  if (e - s <= 24) {
    let out = "";
    for (let i = s; i < e; i++) {
      const c = b[i]!;
      if (c >= 0x80) return decoder.decode(b.subarray(s, e));
      out += String.fromCharCode(c);
    }
    return out;
  }
  return decoder.decode(b.subarray(s, e));
}

export class CsvRecords {
  readonly bytes: Uint8Array;
  cellStart = new Uint32Array(1024);
  cellEnd = new Uint32Array(1024);
  cellFlags = new Uint8Array(1024);
  cellValue = new Float64Array(1024);
  cells = 0;
  readonly special = new Map<number, string>();
  recFirst = new Uint32Array(256);
  recCount = new Int32Array(256);
  recLine = new Int32Array(256);
  recUnterminated = new Uint8Array(256);
  records = 0;
  /** The units marker comment came before the first record. */
  marker = false;

  constructor(bytes: Uint8Array) {
    this.bytes = bytes;
  }

  /** Index of cell j of record r, or -1 when the record is shorter. */
  cellAt(r: number, j: number): number {
    return j < this.recCount[r]! ? this.recFirst[r]! + j : -1;
  }

  /** The value of cell k as text (unquoted cells trimmed, quoted ones as written). */
  cellString(k: number): string {
    if (this.cellFlags[k]! & SPECIAL) return this.special.get(k)!;
    return decodeSpan(this.bytes, this.cellStart[k]!, this.cellEnd[k]!);
  }

  quoted(k: number): boolean {
    return (this.cellFlags[k]! & QUOTED) !== 0;
  }

  /** Every cell of record r as text. */
  recordCells(r: number): string[] {
    const out: string[] = [];
    for (let j = 0; j < this.recCount[r]!; j++) out.push(this.cellString(this.recFirst[r]! + j));
    return out;
  }

  addCell(s: number, e: number, flags: number, value?: string): void {
    const k = this.cells++;
    if (k >= this.cellStart.length) {
      this.cellStart = grow(this.cellStart, k + 1);
      this.cellEnd = grow(this.cellEnd, k + 1);
      this.cellFlags = grow(this.cellFlags, k + 1);
      this.cellValue = grow(this.cellValue, k + 1);
    }
    this.cellStart[k] = s;
    this.cellEnd[k] = e;
    this.cellFlags[k] = flags;
    if (value !== undefined) this.special.set(k, value);
  }

  addRecord(first: number, line: number, unterminated: number): void {
    const r = this.records++;
    if (r >= this.recFirst.length) {
      this.recFirst = grow(this.recFirst, r + 1);
      this.recCount = grow(this.recCount, r + 1);
      this.recLine = grow(this.recLine, r + 1);
      this.recUnterminated = grow(this.recUnterminated, r + 1);
    }
    this.recFirst[r] = first;
    this.recCount[r] = this.cells - first;
    this.recLine[r] = line;
    this.recUnterminated[r] = unterminated;
  }
}

/**
 * Splits bytes[from..] into records. `delim` is the separator's byte (ASCII). Record r starts on
 * line recLine[r] (1-based, counting skipped lines and newlines inside quotes). `marker` is the
 * comment that, before the first record, says the second record gives units.
 */
export function splitRecords(b: Uint8Array, from: number, delim: number, marker: string): CsvRecords {
  const R = new CsvRecords(b);
  const n = b.length;
  // Room for the cells, guessed from the separators and line ends of the first 64 KiB.
  const sample = Math.min(n - from, 65536);
  let seps = 0;
  for (let t = from; t < from + sample; t++) if (b[t] === delim || b[t] === 10) seps++;
  const guess = Math.min(1 << 27, Math.ceil(((seps + 1) / Math.max(sample, 1)) * (n - from) * 1.05) + 16);
  R.cellStart = new Uint32Array(guess);
  R.cellEnd = new Uint32Array(guess);
  R.cellFlags = new Uint8Array(guess);
  R.cellValue = new Float64Array(guess);
  const d = delim;
  // Numbers are read while splitting unless the delimiter could be part of one.
  const numbersHere = !/[0-9+\-.eEdD]/.test(String.fromCharCode(d));
  let i = from;
  let line = 1;
  while (i < n) {
    // Start of a line: comment or blank?
    let j = i;
    while (j < n && (b[j] === 32 || b[j] === 9)) j++;
    const c0 = j < n ? b[j]! : -1;
    if (j >= n || c0 === 10 || c0 === 13 || c0 === 35 /* # */) {
      let e = j;
      while (e < n && b[e] !== 10 && b[e] !== 13) e++;
      if (c0 === 35 && R.records === 0 && decoder.decode(b.subarray(i, e)).trim() === marker) R.marker = true;
      if (e < n && b[e] === 13 && b[e + 1] === 10) e++;
      i = e + 1;
      line++;
      continue;
    }
    const first = R.cells;
    const recLine = line;
    let unterminated = 0;
    if (d === 32) i = j; // space-separated: leading blanks are not a field
    // Cells of one record.
    for (;;) {
      let k = i;
      if (d !== 32) while (k < n && b[k] === 32) k++;
      if (k < n && b[k] === 34 /* " */) {
        const s0 = k + 1;
        let p = s0;
        let closed = false;
        let doubled = false;
        let contentEnd = n;
        while (p < n) {
          const q = b.indexOf(34, p);
          if (q < 0) {
            p = n;
            break;
          }
          if (b[q + 1] === 34) {
            doubled = true;
            p = q + 2;
          } else {
            contentEnd = q;
            p = q + 1;
            closed = true;
            break;
          }
        }
        // Newlines inside the quoted part.
        for (let t = s0; t < contentEnd; t++) {
          const ch = b[t]!;
          if (ch === 10 || (ch === 13 && b[t + 1] !== 10)) line++;
        }
        if (!closed) unterminated = 1;
        // Anything between the closing quote and the delimiter is appended, trimmed (lenient).
        let e = p;
        while (e < n && b[e] !== d && b[e] !== 10 && b[e] !== 13) e++;
        let ts = p;
        let te = e;
        while (ts < te && isBlank(b[ts]!)) ts++;
        while (te > ts && isBlank(b[te - 1]!)) te--;
        if (!doubled && ts === te) R.addCell(s0, contentEnd, QUOTED);
        else {
          let s = decoder.decode(b.subarray(s0, contentEnd));
          if (doubled) s = s.replace(/""/g, '"');
          if (ts < te) s += decoder.decode(b.subarray(ts, te)).trim();
          R.addCell(s0, contentEnd, QUOTED | SPECIAL, s);
        }
        i = e;
      } else {
        // A number is read here and then: it ends the cell when only blanks follow before the delimiter or line end.
        let ns = i;
        while (ns < n) {
          const c = b[ns]!;
          if ((c === 32 && d !== 32) || ((c === 9 || c === 11 || c === 12) && c !== d)) ns++;
          else break;
        }
        const c = ns < n ? b[ns]! : 0;
        if (numbersHere && ((c >= 48 && c <= 57) || c === 45 || c === 43 || c === 46)) {
          const t = scanNumberPrefix(b, ns, n);
          if (t >= 0) {
            let u = t;
            while (u < n) {
              const c2 = b[u]!;
              if ((c2 === 32 && d !== 32) || ((c2 === 9 || c2 === 11 || c2 === 12) && c2 !== d)) u++;
              else break;
            }
            if (u >= n || b[u] === d || b[u] === 10 || b[u] === 13) {
              const k2 = R.cells;
              R.addCell(ns, t, scanKind[0] === DECIMAL ? NUMBER_DEC : NUMBER_INT);
              R.cellValue[k2] = scanned[0]!;
              i = u;
              if (i < n && b[i] === d) {
                i++;
                if (d === 32) {
                  while (i < n && (b[i] === 32 || b[i] === 9)) i++;
                  if (i >= n || b[i] === 10 || b[i] === 13) break;
                }
                continue;
              }
              break;
            }
          }
        }
        let e = i;
        while (e < n) {
          const c = b[e]!;
          if (c === d || c === 10 || c === 13) break;
          e++;
        }
        let s = i;
        let t = e;
        while (s < t && isBlank(b[s]!)) s++;
        while (t > s && isBlank(b[t - 1]!)) t--;
        // A non-ASCII edge may be a Unicode blank that trim() removes: let the decoder and trim decide.
        if (s < t && (b[s]! >= 0x80 || b[t - 1]! >= 0x80)) R.addCell(s, t, SPECIAL, decoder.decode(b.subarray(s, t)).trim());
        else R.addCell(s, t, 0);
        i = e;
      }
      if (i < n && b[i] === d) {
        i++;
        if (d === 32) {
          // space-separated: a run of blanks is one separator; blanks before the line end are none
          while (i < n && (b[i] === 32 || b[i] === 9)) i++;
          if (i >= n || b[i] === 10 || b[i] === 13) break;
        }
        continue;
      }
      break;
    }
    // End of record.
    if (i < n && b[i] === 13 && b[i + 1] === 10) i++;
    i++;
    line++;
    R.addRecord(first, recLine, unterminated);
  }
  return R;
}
