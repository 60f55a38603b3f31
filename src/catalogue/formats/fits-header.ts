/**
 * FITS header cards (FITS Standard 4.0 §4): 80-character ASCII cards in 2880-byte blocks ended by
 * END; `KEYWORD = value / comment`; strings in single quotes with '' for a quote; long strings
 * continued with `&` and CONTINUE cards (§4.2.1.2).
 */
import { PeculiarError } from "../../errors.js";

export const BLOCK = 2880;
export const CARD = 80;

export interface Card {
  key: string;
  /** string, number, boolean, or undefined for commentary cards and empty values. */
  value: string | number | boolean | undefined;
  /** The value as written (for exact integers beyond 2^53). */
  raw: string;
  comment: string;
}

export interface Header {
  cards: Card[];
  /** Byte offset just after the header's last block. */
  end: number;
}

const INT_RE = /^[+-]?\d+$/;
const FLOAT_RE = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[EeDd][+-]?\d+)?$/;

/** Parses the value and comment field of a card (columns 11-80). */
function parseValue(field: string): { value: Card["value"]; raw: string; comment: string; continued: boolean } {
  const s = field.trimStart();
  if (s.startsWith("'")) {
    let out = "";
    let i = 1;
    for (;;) {
      const q = s.indexOf("'", i);
      if (q < 0) {
        out += s.slice(i);
        i = s.length;
        break;
      }
      out += s.slice(i, q);
      if (s[q + 1] === "'") {
        out += "'";
        i = q + 2;
      } else {
        i = q + 1;
        break;
      }
    }
    const rest = s.slice(i);
    const slash = rest.indexOf("/");
    const comment = slash >= 0 ? rest.slice(slash + 1).trim() : "";
    const value = out.replace(/ +$/, "");
    return { value, raw: value, comment, continued: value.endsWith("&") };
  }
  const slash = s.indexOf("/");
  const token = (slash >= 0 ? s.slice(0, slash) : s).trim();
  const comment = slash >= 0 ? s.slice(slash + 1).trim() : "";
  let value: Card["value"];
  if (token === "T") value = true;
  else if (token === "F") value = false;
  else if (INT_RE.test(token)) value = Number(token);
  else if (FLOAT_RE.test(token)) value = Number(token.replace(/[Dd]/, "e"));
  else value = token === "" ? undefined : token;
  return { value, raw: token, comment, continued: false };
}

/** Reads the header that starts at `offset`; `hdu` numbers it in messages. */
export function parseHeader(bytes: Uint8Array, offset: number, file: string, hdu: number): Header {
  const cards: Card[] = [];
  let pos = offset;
  for (;;) {
    if (pos + CARD > bytes.length) {
      throw new PeculiarError("format", `truncated: header of HDU ${hdu} has no END card (file ends at byte ${bytes.length})`, { file });
    }
    let text = "";
    for (let k = 0; k < CARD; k++) text += String.fromCharCode(bytes[pos + k]!);
    pos += CARD;
    const key = text.slice(0, 8).trimEnd();
    if (key === "END") break;
    if (text.slice(8, 10) === "= " && key !== "COMMENT" && key !== "HISTORY" && key !== "") {
      const v = parseValue(text.slice(10));
      cards.push({ key, value: v.value, raw: v.raw, comment: v.comment });
    } else if (key === "CONTINUE") {
      const prev = cards[cards.length - 1];
      const v = parseValue(text.slice(8));
      if (prev && typeof prev.value === "string" && prev.value.endsWith("&") && typeof v.value === "string") {
        prev.value = prev.value.slice(0, -1) + v.value;
        prev.raw = prev.value;
        if (v.comment) prev.comment = prev.comment ? `${prev.comment} ${v.comment}` : v.comment;
      }
    } else cards.push({ key, value: undefined, raw: "", comment: text.slice(8).trimEnd() });
  }
  const used = pos - offset;
  const end = offset + Math.ceil(used / BLOCK) * BLOCK;
  return { cards, end: Math.min(end, bytes.length) };
}

export function card(h: Header, key: string): Card | undefined {
  return h.cards.find((c) => c.key === key);
}
export function num(h: Header, key: string, fallback?: number): number | undefined {
  const v = card(h, key)?.value;
  return typeof v === "number" ? v : fallback;
}
export function str(h: Header, key: string): string | undefined {
  const v = card(h, key)?.value;
  return typeof v === "string" ? v : undefined;
}

// ---- writing ----

function pad(s: string, n: number): string {
  return s.length >= n ? s : s + " ".repeat(n - s.length);
}

function asciiOnly(s: string): string {
  return s.replace(/[^\x20-\x7e]/g, (c) => `\\u${c.charCodeAt(0).toString(16).padStart(4, "0")}`);
}

export function quoteString(s: string): string {
  return `'${pad(asciiOnly(s).replace(/'/g, "''"), 8)}'`;
}

/** Number as a FITS value: integers as written, floats with an upper-case exponent. */
export function formatNumber(x: number | bigint): string {
  if (typeof x === "bigint" || Number.isInteger(x)) {
    const s = String(x);
    if (typeof x === "bigint" || Math.abs(x) < 1e16) return s;
  }
  let s = String(x).toUpperCase();
  if (!s.includes(".") && !s.includes("E")) s += ".0";
  if (s.includes("E") && !s.slice(0, s.indexOf("E")).includes(".")) s = s.replace("E", ".0E");
  return s;
}

/** One card: `KEY     = value / comment` (value right-justified to column 30 unless a string). */
export function valueCard(key: string, value: string | number | bigint | boolean, comment = ""): string {
  let v: string;
  if (typeof value === "string") v = quoteString(value).padEnd(20);
  else if (typeof value === "boolean") v = (value ? "T" : "F").padStart(20);
  else v = formatNumber(value).padStart(20);
  let text = `${pad(key, 8)}= ${v}`;
  if (comment) text += ` / ${asciiOnly(comment)}`;
  return pad(text, CARD).slice(0, CARD);
}

/** A string that may be longer than one card: `KEY = 'part&'` then CONTINUE cards (FITS 4.0 §4.2.1.2). */
export function longStringCards(key: string, value: string, comment = ""): string[] {
  const ascii = asciiOnly(value);
  const first = `${pad(key, 8)}= '`;
  if (first.length + ascii.replace(/'/g, "''").length + 1 <= CARD) return [valueCard(key, value, comment)];
  const out: string[] = [];
  const room = CARD - 10 - 3; // quote, ampersand, quote
  let i = 0;
  let prefix = first;
  while (i < ascii.length) {
    // Take characters until the escaped chunk fills the room; never split a doubled quote.
    let chunk = "";
    let j = i;
    while (j < ascii.length) {
      const e = ascii[j] === "'" ? "''" : ascii[j]!;
      if (chunk.length + e.length > room) break;
      chunk += e;
      j++;
    }
    const last = j >= ascii.length;
    out.push(pad(`${prefix}${chunk}${last ? "" : "&"}'`, CARD));
    prefix = "CONTINUE  '";
    i = j;
  }
  if (out.length === 0) out.push(pad(`${first}'`, CARD));
  // The comment goes on the last card when it fits there.
  const last = out[out.length - 1]!.trimEnd();
  const c = asciiOnly(comment);
  if (c && last.length + 3 + c.length <= CARD) out[out.length - 1] = pad(`${last} / ${c}`, CARD);
  return out;
}

export function commentCard(key: "COMMENT" | "HISTORY", text: string): string {
  return pad(`${key} ${asciiOnly(text)}`, CARD).slice(0, CARD);
}

/** Cards plus END, padded with spaces to whole blocks. */
export function headerBytes(cards: string[]): Uint8Array {
  const all = [...cards, pad("END", CARD)];
  const size = Math.ceil((all.length * CARD) / BLOCK) * BLOCK;
  const out = new Uint8Array(size).fill(32);
  let p = 0;
  for (const c of all) {
    for (let k = 0; k < CARD; k++) out[p + k] = c.charCodeAt(k) & 0x7f;
    p += CARD;
  }
  return out;
}

// ---- values that do not fit a header as text ----

export function base64ToBytes(s: string): Uint8Array {
  const bin = atob(s.replace(/\s+/g, ""));
  const out = new Uint8Array(bin.length);
  for (let i = 0; i < bin.length; i++) out[i] = bin.charCodeAt(i);
  return out;
}
export function bytesToBase64(b: Uint8Array): string {
  let s = "";
  for (let i = 0; i < b.length; i++) s += String.fromCharCode(b[i]!);
  return btoa(s);
}
