// The byte-level number reader and writer must give exactly what ECMAScript gives.
// Reference for every check value: ECMAScript Number() (StringToNumber) and String() (Number::toString)
// as implemented by Node 20 (V8), called on the same text or double in the same test.
import { describe, expect, it } from "vitest";
import { randomLcg } from "d3-random";
import { DECIMAL, INTEGER, NOT_NUMBER, scanNumber, scanned, writeShortest } from "../../../src/catalogue/formats/decimal.js";

const enc = new TextEncoder();
const dec = new TextDecoder();
// The reader's syntax (DEVELOPERS.md, "Catalogue formats": Fortran D exponents and inf accepted).
const INT_RE = /^[+-]?\d+$/;
const FLOAT_RE = /^[+-]?(?:\d+\.?\d*|\.\d+)(?:[eEdD][+-]?\d+)?$/;
const INF_RE = /^[+-]?(?:inf|infinity)$/i;

function reference(text: string): { kind: number; value: number } {
  if (INT_RE.test(text)) return { kind: INTEGER, value: Number(text) };
  if (FLOAT_RE.test(text)) return { kind: DECIMAL, value: Number(text.replace(/[dD]/, "e")) };
  if (INF_RE.test(text)) return { kind: DECIMAL, value: text.startsWith("-") ? -Infinity : Infinity };
  return { kind: NOT_NUMBER, value: NaN };
}

/** Scans text; returns kind, value (NaN when left to Number()) and whether it disagrees with the reference. */
function scan(text: string) {
  const b = enc.encode(`,${text},`); // inside a larger buffer, as in a file
  const kind = scanNumber(b, 1, b.length - 1);
  const value = scanned[0]!;
  const want = reference(text);
  const wrong = kind !== want.kind || (kind !== NOT_NUMBER && value === value && !Object.is(value, want.value));
  return { kind, value, wrong };
}

function written(x: number): string | undefined {
  const out = new Uint8Array(40);
  const p = writeShortest(x, out, 3);
  return p < 0 ? undefined : dec.decode(out.subarray(3, p));
}

const bits = new Float64Array(1);
const words = new Uint32Array(bits.buffer);

/** Seeded doubles of several shapes: random bit patterns, positions, short decimals, wide magnitudes. */
function doubles(n: number, seed: number): number[] {
  const u = randomLcg(seed);
  const out: number[] = [];
  while (out.length < n) {
    const shape = out.length % 5;
    let x: number;
    if (shape === 0) {
      words[0] = (u() * 2 ** 32) >>> 0;
      words[1] = (u() * 2 ** 32) >>> 0;
      x = bits[0]!;
      if (!Number.isFinite(x)) continue;
    } else if (shape === 1) x = 360 * u() - (u() < 0.5 ? 180 : 0);
    else if (shape === 2) x = (Math.round(u() * 1e6) / 1000) * 10 ** Math.floor(u() * 40 - 20);
    else if (shape === 3) x = (u() - 0.5) * 10 ** Math.floor(u() * 120 - 60);
    else x = Math.round((u() - 0.5) * 2 ** Math.floor(u() * 64));
    out.push(x);
  }
  return out;
}

const EDGES = [
  "0", "-0", "+0", "0.0", "-0.0", "00", "007", "+5", "-5", ".5", "5.", "+.5", "-.5", "0.1", "0.2", "0.30000000000000004",
  "1.0000000000000002", "4.35", "100", "2147483647", "2147483648", "-2147483648", "-2147483649",
  "9007199254740991", "9007199254740992", "9007199254740993", "9007199254740995", "18446744073709551615",
  "18446744073709551616", "123456789012345678901234567890", "1234567890123456789", "12345678901234567890",
  "1e308", "1.7976931348623157e308", "1.7976931348623159e308", "2e308", "2.2250738585072014e-308",
  "2.225073858507201e-308", "5e-324", "4.9e-324", "2.4703282292062327e-324", "2.4703282292062328e-324",
  "1e-400", "1e+22", "1e22", "1e23", "9.999999999999999e22", "8.98846567431158e307", "1D5", "1d-3", "2.5D+2",
  "1e0000000000000000005", "1.5e-7", "1E-5", "1e+5", "90.84426292218268", "-55.461955192715074",
  "0.000001", "0.0000001", "123456789.123456789", "1.00000000000000000000000001", "0.1e1", "10e-1",
  "inf", "-inf", "+Inf", "INF", "Infinity", "-infinity", "infinit", "infinityy",
  "", "+", "-", ".", "e5", "1e", "1e+", "1e-", "1.2.3", "0x10", "1_000", " 1", "1 ", "1,5", "NaN", "nan", "--1", "+-1",
  "1e5.5", "5..", "..5", "1f", "1.5f", "٣",
];

describe("scanNumber", () => {
  it("agrees with Number() on the edge list (signs, '+', '.5', '5.', integers beyond 2^53, denormals, D exponents)", () => {
    for (const t of EDGES) expect(scan(t).wrong, t).toBe(false);
  });

  it("agrees with Number() on the shortest text of 1e5 seeded random doubles, and decides almost all itself", () => {
    let undecided = 0;
    for (const x of doubles(100000, 20261201)) {
      const r = scan(String(x));
      if (r.wrong) expect(String(x)).toBe("agreeing");
      if (r.value !== r.value) undecided++;
    }
    // undecided: more than 18 digits or an exponent beyond +-64 (the random bit patterns), left to Number()
    expect(undecided).toBeLessThan(25000);
  });

  it("agrees with Number() on 1e5 seeded random decimal texts of 1 to 22 digits with and without exponents", () => {
    const u = randomLcg(7);
    for (let i = 0; i < 100000; i++) {
      const nd = 1 + Math.floor(u() * 22);
      let d = "";
      for (let k = 0; k < nd; k++) d += Math.floor(u() * 10);
      const point = Math.floor(u() * (nd + 1));
      let t = (u() < 0.3 ? "-" : u() < 0.1 ? "+" : "") + d.slice(0, point) + "." + d.slice(point);
      if (u() < 0.5) t = t.replace(".", "");
      if (u() < 0.4) t += (u() < 0.5 ? "e" : "E") + (u() < 0.5 ? "-" : u() < 0.5 ? "+" : "") + Math.floor(u() * 70);
      if (scan(t).wrong) expect(t).toBe("agreeing");
    }
  });

  it("agrees with Number() next to rounding boundaries (halfway between two doubles, and a digit either side)", () => {
    // Halfway points are exact decimals: x + ulp/2 written out in full (BigInt arithmetic), then cut to 17-19 digits.
    const u = randomLcg(99);
    for (let i = 0; i < 3000; i++) {
      const x = 1 + u() * 1000;
      const next = nextUp(x);
      const mid = exactDecimal(x, next);
      for (const cut of [17, 18, 19, 30]) {
        const digits = mid.replace(".", "");
        const at = mid.indexOf(".");
        const t = digits.slice(0, cut);
        const text = at < cut ? `${t.slice(0, at)}.${t.slice(at)}` : t;
        if (scan(text).wrong) expect(text).toBe("agreeing");
      }
    }
  });
});

function nextUp(x: number): number {
  bits[0] = x;
  if (words[0] === 0xffffffff) {
    words[0] = 0;
    words[1]!++;
  } else words[0]!++;
  return bits[0]!;
}

/** The exact decimal of (a + b) / 2 for positive doubles in [1, 2^53). */
function exactDecimal(a: number, b: number): string {
  const scale = 2n ** 60n;
  const num = BigInt(Math.floor(a)) * scale + BigInt(Math.round((a - Math.floor(a)) * 2 ** 60)) + BigInt(Math.floor(b)) * scale + BigInt(Math.round((b - Math.floor(b)) * 2 ** 60));
  // num / 2^61 exactly: multiply by 5^61 to get a decimal with 61 places
  const digits = (num * 5n ** 61n).toString();
  return `${digits.slice(0, -61)}.${digits.slice(-61)}`;
}

describe("writeShortest", () => {
  it("writes exactly String(x) for 1e5 seeded random doubles, and decides almost all itself", () => {
    let undecided = 0;
    for (const x of doubles(100000, 5)) {
      if (x === 0) continue;
      const t = written(x);
      if (t === undefined) undecided++;
      else if (t !== String(x)) expect(t).toBe(String(x));
    }
    // undecided: magnitudes outside [1e-48, 1e64] (the random bit patterns), left to String()
    expect(undecided).toBeLessThan(25000);
  });

  it("writes exactly String(x) for powers of two and ten, their neighbours, and integers", () => {
    const xs: number[] = [];
    for (let e = -200; e <= 200; e++) xs.push(2 ** e, -(2 ** e), nextUp(2 ** e));
    for (let e = -60; e <= 70; e++) xs.push(Number(`1e${e}`), nextUp(Number(`1e${e}`)), Number(`9.999999999999999e${e}`), Number(`5e${e}`));
    for (let k = 1; k < 100000; k = Math.ceil(k * 1.37)) xs.push(k, -k, k + 0.5, k / 3, 1 / k);
    xs.push(0.1, 0.2, 0.30000000000000004, 1e21, 1e-7, 123e-20, 187.70593075, Number.MAX_SAFE_INTEGER, 2 ** 53 + 2);
    for (const x of xs) {
      const t = written(x);
      if (t !== undefined) expect(t, String(x)).toBe(String(x));
    }
  });

  it("reads back what it writes (write -> read round trip)", () => {
    for (const x of doubles(20000, 11)) {
      const t = written(x);
      if (t === undefined || x === 0) continue;
      const b = enc.encode(t);
      scanNumber(b, 0, b.length);
      if (scanned[0] === scanned[0]) expect(Object.is(scanned[0], x), t).toBe(true);
    }
  });
});
