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

const NUMBER_FIELD = /^(\d+(?:\.\d*)?|\.\d+)/;
const EXPONENT = /^[eE][+-]?\d+/;
// Marker after each field, by position. ":" and whitespace separate any two fields.
const FIRST_MARKERS = new Set(["h", "d", "°"]);
const MINUTE_MARKERS = new Set(["m", "'", "′"]);
const SECOND_MARKERS = new Set(["s", '"', "″"]);
const MINUS = new Set(["-", "\u2212"]);

interface Fields {
  sign: 1 | -1;
  values: number[];
  /** "h" or "d" when the first field carries a marker, else undefined. */
  firstMarker: "h" | "d" | undefined;
  text: string;
}

/** Splits a string into sign and up to three unsigned fields, or returns a reason. */
function splitFields(raw: string): Fields | string {
  let s = raw.trim();
  if (s === "") return "is empty";
  let sign: 1 | -1 = 1;
  const c0 = s[0]!;
  if (MINUS.has(c0) || c0 === "+") {
    sign = MINUS.has(c0) ? -1 : 1;
    s = s.slice(1).trimStart();
  }
  const values: number[] = [];
  const fractions: boolean[] = [];
  let firstMarker: "h" | "d" | undefined;
  let pos = 0;
  while (pos < s.length) {
    if (values.length === 3) return "is not an angle (more than three fields)";
    const m = NUMBER_FIELD.exec(s.slice(pos));
    if (!m) return "is not an angle";
    let token = m[1]!;
    pos += token.length;
    const e = EXPONENT.exec(s.slice(pos));
    if (e) {
      token += e[0];
      pos += e[0].length;
    }
    const x = Number(token);
    if (!Number.isFinite(x)) return "is not an angle";
    values.push(x);
    fractions.push(/[.eE]/.test(token));
    const field = values.length;
    // Optional marker, then optional separator whitespace.
    let ws = 0;
    while (pos + ws < s.length && /\s/.test(s[pos + ws]!)) ws++;
    const ch = s[pos + ws];
    let marker: string | undefined;
    if (ch !== undefined) {
      if (s.startsWith("deg", pos + ws)) marker = "deg";
      else if (FIRST_MARKERS.has(ch) || MINUTE_MARKERS.has(ch) || SECOND_MARKERS.has(ch) || ch === ":") marker = ch;
    }
    if (marker !== undefined) {
      if (marker === ":") {
        if (field === 3) return "is not an angle (too many fields)";
      } else if (field === 1 && (marker === "h" || marker === "d" || marker === "°" || marker === "deg")) {
        firstMarker = marker === "h" ? "h" : "d";
      } else if (field === 2 && MINUTE_MARKERS.has(marker)) {
        // minutes
      } else if (field === 3 && SECOND_MARKERS.has(marker)) {
        // seconds
      } else if (field === 1 && MINUTE_MARKERS.has(marker)) {
        return "is not an angle (minutes marker on the first field)";
      } else {
        return "is not an angle (marker out of order)";
      }
      pos += ws + marker.length;
      while (pos < s.length && /\s/.test(s[pos]!)) pos++;
      if (marker === ":" && pos >= s.length) return "is not an angle (ends with a separator)";
    } else if (ws > 0) {
      pos += ws;
    } else if (pos < s.length) {
      return "is not an angle";
    }
  }
  if (values.length === 0) return "is not an angle";
  for (let i = 0; i < values.length - 1; i++) if (fractions[i]) return "is not an angle (only the last field may have a fraction)";
  return { sign, values, firstMarker, text: raw };
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
  const { sign, values, firstMarker } = f;
  if (values.length === 1 && firstMarker === undefined) {
    // A bare decimal number: the unit decides.
    return angleFromNumber(sign * values[0]!, kind, unit ?? "deg");
  }
  const [a, m = 0, s = 0] = values;
  if (values.length >= 2 && m >= 60) return { deg: NaN, reason: "has minutes >= 60" };
  if (values.length === 3 && s >= 60) return { deg: NaN, reason: "has seconds >= 60" };
  if (values.length >= 2 && unit === "rad") return { deg: NaN, reason: "is sexagesimal but the column unit is rad" };
  const hours = firstMarker === "h" || (firstMarker === undefined && (unit === "h" || (unit === undefined && kind === "ra")));
  if (kind === "dec" && hours) return { deg: NaN, reason: "is in hours, which a declination cannot be" };
  const units = (a! * 3600 + m * 60 + s) / 3600;
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
