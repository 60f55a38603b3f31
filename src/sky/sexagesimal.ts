/**
 * Sexagesimal and decimal angles in, degrees out; degrees in, sexagesimal text out.
 *
 * Rules (domain reference §2; CDS "Standard for Astronomical Catalogues" v3.5 for the sign):
 * - The sign comes from the string ("-", U+2212 "−" or "+" before the first digit), never from the
 *   integer field: "-00 30 00" is -0.5 deg although parseInt("-00") is -0.
 * - Fields are separated by spaces, colons, or markers h m s / d ' " / ° ′ ″; only the last field
 *   may carry a fraction; minutes and seconds must be below 60.
 * - Whether a bare number is degrees, radians or hours is decided by the column unit, never guessed.
 *   Bare sexagesimal text (no markers) is hours for RA and degrees for Dec unless the unit says otherwise.
 * - Out-of-range values are invalid, never wrapped: RA outside [0, 360) deg (or >= 24 h), |Dec| > 90.
 *
 * Kernels never throw per value: they return NaN and a reason phrase that reads after the quoted
 * value, e.g. `"+95 00 00" is outside [-90, 90]`.
 */
import { RAD } from "./angles.js";

/** Which coordinate an angle is: right ascension / longitude, or declination / latitude. */
export type AngleKind = "ra" | "dec";
/** How a bare number is read. "sexagesimal" columns give bare numbers in the default unit of the kind. */
export type AngleUnit = "deg" | "rad" | "h";

/** One parsed angle: degrees, or NaN with a reason phrase. */
export interface AngleResult {
  deg: number;
  reason: string | undefined;
}

/** Column of parsed angles: degrees (NaN where invalid) and a reason for each invalid entry. */
export interface AngleColumn {
  deg: Float64Array;
  reasons: (string | undefined)[];
  invalid: number;
}

/**
 * The angle unit named by a unit string (FITS/VOTable/CDS spellings), `undefined` when the string
 * is empty, or `null` when it names something that is not an angle unit we read.
 * "h:m:s" and "d:m:s" (CDS/VOTable sexagesimal units) map to h and deg.
 */
export function parseAngleUnit(unit: string | undefined): AngleUnit | undefined | null {
  if (unit === undefined) return undefined;
  const u = unit.trim().replace(/^["']|["']$/g, "").toLowerCase();
  if (u === "") return undefined;
  if (["deg", "degree", "degrees", "°", "d:m:s", "dms", "d", "deg:arcmin:arcsec"].includes(u)) return "deg";
  if (["rad", "radian", "radians"].includes(u)) return "rad";
  if (["h", "hr", "hour", "hours", "hourangle", "h:m:s", "hms", "h:min:s"].includes(u)) return "h";
  return null;
}

// Character codes of signs, separators and markers.
const CH = {
  h: 104,
  d: 100,
  e: 101,
  g: 103,
  m: 109,
  s: 115,
  E: 69,
  colon: 58,
  dot: 46,
  plus: 43,
  minus: 45,
  unicodeMinus: 0x2212,
  degree: 0xb0,
  quote: 39,
  dquote: 34,
  prime: 0x2032,
  dprime: 0x2033,
} as const;

interface Fields {
  sign: 1 | -1;
  /** Up to three unsigned fields; `count` of them are used. */
  a: number;
  b: number;
  c: number;
  count: number;
  /** "h" or "d" when the first field carries a marker, else undefined. */
  firstMarker: "h" | "d" | undefined;
}

const SCRATCH: Fields = { sign: 1, a: 0, b: 0, c: 0, count: 0, firstMarker: undefined };

const isDigit = (c: number) => c >= 48 && c <= 57;
const isSpace = (c: number) => c === 32 || c === 9 || c === 10 || c === 13 || c === 0xa0 || c === 0x2009 || c === 0x202f;

/**
 * Splits a string into sign and up to three unsigned fields, or returns a reason. A hand-written
 * scanner (no regular expressions, no substrings but the number tokens): catalogues have millions of rows.
 */
function splitFields(raw: string): Fields | string {
  let p = 0;
  let end = raw.length;
  while (p < end && isSpace(raw.charCodeAt(p))) p++;
  while (end > p && isSpace(raw.charCodeAt(end - 1))) end--;
  if (p === end) return "is empty";
  let sign: 1 | -1 = 1;
  const c0 = raw.charCodeAt(p);
  if (c0 === CH.minus || c0 === CH.unicodeMinus || c0 === CH.plus) {
    if (c0 !== CH.plus) sign = -1;
    p++;
    while (p < end && isSpace(raw.charCodeAt(p))) p++;
  }
  // One scratch object for every call: parseAngle reads it before the next call (no allocation per row).
  const out = SCRATCH;
  out.sign = sign;
  out.a = out.b = out.c = 0;
  out.count = 0;
  out.firstMarker = undefined;
  let fraction = false;
  while (p < end) {
    if (out.count === 3) return "is not an angle (more than three fields)";
    if (fraction) return "is not an angle (only the last field may have a fraction)";
    // Number: digits [. digits] | . digits, then an optional exponent.
    const start = p;
    let digits = 0;
    let whole = 0;
    while (p < end && isDigit(raw.charCodeAt(p))) {
      whole = whole * 10 + (raw.charCodeAt(p) - 48);
      p++;
      digits++;
    }
    const integer = p === end || raw.charCodeAt(p) !== CH.dot;
    if (p < end && raw.charCodeAt(p) === CH.dot) {
      fraction = true;
      p++;
      while (p < end && isDigit(raw.charCodeAt(p))) (p++, digits++);
    }
    if (digits === 0) return "is not an angle";
    const ce = raw.charCodeAt(p);
    if (p < end && (ce === CH.e || ce === CH.E)) {
      // "e" is an exponent only when digits follow.
      let q = p + 1;
      const cs = raw.charCodeAt(q);
      if (cs === CH.plus || cs === CH.minus) q++;
      if (q < end && isDigit(raw.charCodeAt(q))) {
        while (q < end && isDigit(raw.charCodeAt(q))) q++;
        p = q;
        fraction = true;
      }
    }
    // Integers of up to 15 digits are exact as accumulated; anything else goes through Number().
    const x = integer && digits <= 15 && !fraction ? whole : Number(raw.slice(start, p));
    if (!Number.isFinite(x)) return "is not an angle";
    const field = ++out.count;
    if (field === 1) out.a = x;
    else if (field === 2) out.b = x;
    else out.c = x;
    // Optional marker (after optional spaces), then optional spaces.
    let q = p;
    while (q < end && isSpace(raw.charCodeAt(q))) q++;
    if (q >= end) break;
    const ch = raw.charCodeAt(q);
    let len = 1;
    let kind: "first" | "minute" | "second" | "colon" | undefined;
    if (ch === CH.d && raw.charCodeAt(q + 1) === CH.e && raw.charCodeAt(q + 2) === CH.g) {
      kind = "first";
      len = 3;
    } else if (ch === CH.h || ch === CH.d || ch === CH.degree) kind = "first";
    else if (ch === CH.m || ch === CH.quote || ch === CH.prime) kind = "minute";
    else if (ch === CH.s || ch === CH.dquote || ch === CH.dprime) kind = "second";
    else if (ch === CH.colon) kind = "colon";
    if (kind === undefined) {
      if (q === p) return "is not an angle"; // junk glued to the number
      p = q;
      continue;
    }
    if (kind === "colon") {
      if (field === 3) return "is not an angle (too many fields)";
    } else if (kind === "first" && field === 1) {
      out.firstMarker = ch === CH.h ? "h" : "d";
    } else if (kind === "minute" && field === 1) {
      return "is not an angle (minutes marker on the first field)";
    } else if (!(kind === "minute" && field === 2) && !(kind === "second" && field === 3)) {
      return "is not an angle (marker out of order)";
    }
    p = q + len;
    while (p < end && isSpace(raw.charCodeAt(p))) p++;
    if (kind === "colon" && p >= end) return "is not an angle (ends with a separator)";
  }
  if (out.count === 0) return "is not an angle";
  return out;
}

const RA_RANGE_DEG = "is outside [0, 360) deg";
const RA_RANGE_H = "is outside [0, 24) h";
const DEC_RANGE = "is outside [-90, 90]";

/** Range check of a value already in degrees. Returns the reason or undefined. */
export function angleRangeReason(deg: number, kind: AngleKind): string | undefined {
  if (Number.isNaN(deg)) return "is not a number";
  if (!Number.isFinite(deg)) return "is not finite";
  if (kind === "ra") return deg >= 0 && deg < 360 ? undefined : RA_RANGE_DEG;
  return deg >= -90 && deg <= 90 ? undefined : DEC_RANGE;
}

/**
 * A number already read from a numeric column, in `unit` (default degrees), to degrees, checked.
 * NaN gives NaN with reason "is not a number".
 */
export function angleFromNumber(x: number, kind: AngleKind, unit: AngleUnit = "deg"): AngleResult {
  if (Number.isNaN(x)) return { deg: NaN, reason: "is not a number" };
  let deg: number;
  if (unit === "h") {
    if (kind === "dec") return { deg: NaN, reason: "is in hours, which a declination cannot be" };
    if (!(x >= 0 && x < 24)) return { deg: NaN, reason: RA_RANGE_H };
    deg = x * 15;
  } else if (unit === "rad") {
    deg = x * RAD;
    if (kind === "ra" && !(x >= 0 && x < 2 * Math.PI)) return { deg: NaN, reason: "is outside [0, 2pi) rad" };
    if (kind === "dec" && !(Math.abs(x) <= Math.PI / 2)) return { deg: NaN, reason: "is outside [-pi/2, pi/2] rad" };
    // x*RAD can round to exactly 360 for x just below 2pi; keep it in range.
    if (deg >= 360) deg = 0;
    if (deg > 90 && kind === "dec") deg = 90;
    if (deg < -90 && kind === "dec") deg = -90;
  } else {
    deg = x;
  }
  const reason = angleRangeReason(deg, kind);
  return reason ? { deg: NaN, reason } : { deg, reason: undefined };
}

/**
 * Parses one angle from text. `unit` is the column unit: it decides bare numbers (deg, rad, h;
 * default deg) and bare sexagesimal (h or deg; default hours for RA, degrees for Dec).
 * Markers in the string (12h30m, 12d30m, 12°30′) win over the unit.
 */
export function parseAngle(text: string, kind: AngleKind, unit?: AngleUnit): AngleResult {
  const f = splitFields(text);
  if (typeof f === "string") return { deg: NaN, reason: f };
  const { sign, a, b: m, c: s, count, firstMarker } = f;
  if (count === 1 && firstMarker === undefined) {
    // A bare decimal number: the unit decides.
    return angleFromNumber(sign * a, kind, unit ?? "deg");
  }
  if (count >= 2 && m >= 60) return { deg: NaN, reason: "has minutes >= 60" };
  if (count === 3 && s >= 60) return { deg: NaN, reason: "has seconds >= 60" };
  if (count >= 2 && unit === "rad") return { deg: NaN, reason: "is sexagesimal but the column unit is rad" };
  const hours = firstMarker === "h" || (firstMarker === undefined && (unit === "h" || (unit === undefined && kind === "ra")));
  if (kind === "dec" && hours) return { deg: NaN, reason: "is in hours, which a declination cannot be" };
  const units = (a * 3600 + m * 60 + s) / 3600;
  if (kind === "ra" && sign < 0 && units > 0) return { deg: NaN, reason: hours ? RA_RANGE_H : RA_RANGE_DEG };
  if (hours) {
    if (!(units < 24)) return { deg: NaN, reason: RA_RANGE_H };
    return { deg: units * 15, reason: undefined };
  }
  const deg = sign * units;
  const reason = angleRangeReason(deg === 0 ? 0 : deg, kind);
  return reason ? { deg: NaN, reason } : { deg: deg === 0 ? 0 : deg, reason: undefined };
}

/** parseAngle for right ascension. */
export function parseRa(text: string, unit?: AngleUnit): AngleResult {
  return parseAngle(text, "ra", unit);
}

/** parseAngle for declination. */
export function parseDec(text: string, unit?: AngleUnit): AngleResult {
  return parseAngle(text, "dec", unit);
}

/** Parses a column of strings (null = missing). Missing entries are NaN with reason "is empty". */
export function parseAngles(values: ArrayLike<string | null | undefined>, kind: AngleKind, unit?: AngleUnit): AngleColumn {
  const n = values.length;
  const deg = new Float64Array(n);
  const reasons: (string | undefined)[] = new Array(n).fill(undefined);
  let invalid = 0;
  for (let i = 0; i < n; i++) {
    const v = values[i];
    const r = v === null || v === undefined ? { deg: NaN, reason: "is empty" } : parseAngle(v, kind, unit);
    deg[i] = r.deg;
    if (r.reason !== undefined) {
      reasons[i] = r.reason;
      invalid++;
    }
  }
  return { deg, reasons, invalid };
}

/** Checks and converts a numeric column (NaN = missing or not a number). */
export function anglesFromNumbers(values: ArrayLike<number>, kind: AngleKind, unit: AngleUnit = "deg"): AngleColumn {
  const n = values.length;
  const deg = new Float64Array(n);
  const reasons: (string | undefined)[] = new Array(n).fill(undefined);
  let invalid = 0;
  for (let i = 0; i < n; i++) {
    const r = angleFromNumber(values[i]!, kind, unit);
    deg[i] = r.deg;
    if (r.reason !== undefined) {
      reasons[i] = r.reason;
      invalid++;
    }
  }
  return { deg, reasons, invalid };
}

/** Separator styles for formatting: "12:30:49.42", "12 30 49.42", "12h30m49.42s" / "+12d23m28.0s", "+12°23′28.0″". */
export type SexagesimalStyle = "colon" | "space" | "letters" | "symbols";

const STYLE_SEPS: Record<SexagesimalStyle, { ra: [string, string, string]; dec: [string, string, string] }> = {
  colon: { ra: [":", ":", ""], dec: [":", ":", ""] },
  space: { ra: [" ", " ", ""], dec: [" ", " ", ""] },
  letters: { ra: ["h", "m", "s"], dec: ["d", "m", "s"] },
  symbols: { ra: ["h", "m", "s"], dec: ["°", "′", "″"] },
};

/**
 * Splits |value| (in units: hours or degrees) into whole units, minutes and seconds rounded to
 * `decimals` places, carrying so that seconds never print as 60 (59.9995 s -> next minute).
 */
function splitRounded(value: number, decimals: number): [number, number, string] {
  const scale = 10 ** decimals;
  const total = Math.round(Math.abs(value) * 3600 * scale); // integer count of the last digit
  const perMinute = 60 * scale;
  const perUnit = 3600 * scale;
  const whole = Math.floor(total / perUnit);
  const rest = total - whole * perUnit;
  const minutes = Math.floor(rest / perMinute);
  const secUnits = rest - minutes * perMinute;
  const secInt = Math.floor(secUnits / scale);
  const secFrac = secUnits - secInt * scale;
  const sec = String(secInt).padStart(2, "0") + (decimals > 0 ? "." + String(secFrac).padStart(decimals, "0") : "");
  return [whole, minutes, sec];
}

/** RA in degrees as hours, minutes, seconds ("12:30:49.42"). NaN gives "". 24h after rounding wraps to 0h. */
export function formatRa(raDeg: number, decimals = 2, style: SexagesimalStyle = "colon"): string {
  if (!Number.isFinite(raDeg)) return "";
  let [h, m, s] = splitRounded(((raDeg % 360) + 360) % 360 / 15, decimals);
  if (h >= 24) h -= 24;
  const [a, b, c] = STYLE_SEPS[style].ra;
  return `${String(h).padStart(2, "0")}${a}${String(m).padStart(2, "0")}${b}${s}${c}`;
}

/** Dec in degrees as a signed degrees, arcminutes, arcseconds string ("+12:23:28.0"). NaN gives "". */
export function formatDec(decDeg: number, decimals = 1, style: SexagesimalStyle = "colon"): string {
  if (!Number.isFinite(decDeg)) return "";
  const [d, m, s] = splitRounded(decDeg, decimals);
  const zero = d === 0 && m === 0 && /^[0.]+$/.test(s);
  const sign = decDeg < 0 && !zero ? "-" : "+";
  const [a, b, c] = STYLE_SEPS[style].dec;
  return `${sign}${String(d).padStart(2, "0")}${a}${String(m).padStart(2, "0")}${b}${s}${c}`;
}
