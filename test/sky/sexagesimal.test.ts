import { describe, expect, it } from "vitest";
import {
  parseRa,
  parseDec,
  parseAngle,
  parseAngles,
  anglesFromNumbers,
  angleFromNumber,
  parseAngleUnit,
  formatRa,
  formatDec,
} from "../../src/sky/index.js";

// 1e-9 deg (3.6 micro-arcsec): far below catalogue precision, above float64 round-off.
const TOL_DEG = 1e-9;

function expectDeg(text: string, kind: "ra" | "dec", want: number, unit?: "deg" | "rad" | "h", tol = TOL_DEG) {
  const r = parseAngle(text, kind, unit);
  expect(r.reason, `${text}`).toBeUndefined();
  expect(Math.abs(r.deg - want), `${text} -> ${r.deg}`).toBeLessThan(tol);
}

function expectInvalid(text: string, kind: "ra" | "dec", reason: RegExp, unit?: "deg" | "rad" | "h") {
  const r = parseAngle(text, kind, unit);
  expect(Number.isNaN(r.deg), `${text} -> ${r.deg}`).toBe(true);
  expect(r.reason).toMatch(reason);
}

describe("sexagesimal parsing", () => {
  it("reproduces the check values of the domain reference sheet (computed with astropy 8.0.1)", () => {
    expectDeg("12:30:49.42338", "ra", 187.70593075);
    expectDeg("+12:23:28.0439", "dec", 12.3911233056, undefined, 1e-9);
    expectDeg("-00 30 00", "dec", -0.5);
    expectDeg("-0:00:01.5", "dec", -0.000416667, undefined, 1e-9);
    expectDeg("00 42 44.3", "ra", 10.6845833, undefined, 1e-7);
    expectDeg("12h30m49.4s", "ra", 187.7058333, undefined, 1e-7);
  });

  it("takes the sign from the string, never from the integer field", () => {
    // "-00 12 34" is negative although parseInt("-00") is -0 (domain reference §2; CDS standard v3.5).
    expectDeg("-00 12 34", "dec", -(12 / 60 + 34 / 3600));
    expectDeg("\u221200 12 34", "dec", -(12 / 60 + 34 / 3600));
    expectDeg("+00 12 34", "dec", 12 / 60 + 34 / 3600);
    expectDeg("- 00 12 34", "dec", -(12 / 60 + 34 / 3600));
    expectDeg("-0 0 0", "dec", 0);
    expect(Object.is(parseDec("-00 00 00").deg, -0)).toBe(false);
  });

  it("accepts spaces, colons, h m s, d ' \", degree signs and Unicode primes", () => {
    const want = 12 + 23 / 60 + 28.04 / 3600;
    for (const t of ["+12 23 28.04", "+12:23:28.04", "+12d23m28.04s", "+12°23'28.04\"", "+12°23′28.04″", "12° 23′ 28.04″", "12deg23m28.04s"]) {
      expectDeg(t, "dec", want);
    }
    const ra = 15 * (14 + 15 / 60 + 39.7 / 3600);
    for (const t of ["14 15 39.7", "14:15:39.7", "14h15m39.7s", "14h 15m 39.7s", "  14:15:39.7  "]) expectDeg(t, "ra", ra);
  });

  it("reads two fields as degrees (or hours) and decimal minutes", () => {
    expectDeg("-16 41.5", "dec", -(16 + 41.5 / 60));
    expectDeg("06 44.5", "ra", 15 * (6 + 44.5 / 60));
  });

  it("lets the column unit decide bare numbers: degrees, radians or hours", () => {
    expectDeg("187.5", "ra", 187.5);
    expectDeg("187.5", "ra", 187.5, "deg");
    expectDeg("12.5", "ra", 187.5, "h");
    expectDeg("1.5", "dec", 1.5 * (180 / Math.PI), "rad");
    expectDeg("-1e-3", "dec", -1e-3);
    expectDeg("12.5h", "ra", 187.5, "deg");
  });

  it("reads bare sexagesimal RA in hours by default and in degrees when the unit says so", () => {
    expectDeg("12 30 00", "ra", 187.5);
    expectDeg("187 30 00", "ra", 187.5, "deg");
    expectDeg("12d30m00s", "ra", 12.5);
  });

  it("marks minutes or seconds >= 60 as invalid instead of carrying them", () => {
    expectInvalid("12 60 00", "ra", /minutes >= 60/);
    expectInvalid("+12 23 60", "dec", /seconds >= 60/);
    expectInvalid("+12 23 61.5", "dec", /seconds >= 60/);
    expectInvalid("+12 75", "dec", /minutes >= 60/);
  });

  it("marks angles out of range as invalid instead of wrapping them", () => {
    expectInvalid("24 00 00", "ra", /\[0, 24\) h/);
    expectInvalid("24.0", "ra", /\[0, 24\) h/, "h");
    expectInvalid("360", "ra", /\[0, 360\) deg/);
    expectInvalid("-0.5", "ra", /\[0, 360\) deg/);
    expectInvalid("-01 00 00", "ra", /\[0, 24\) h/);
    expectInvalid("+95 00 00", "dec", /outside \[-90, 90\]/);
    expectInvalid("-90 00 00.1", "dec", /outside \[-90, 90\]/);
    expectInvalid("1.6", "dec", /pi\/2/, "rad");
    expectInvalid("6.3", "ra", /2pi/, "rad");
    expectDeg("+90 00 00", "dec", 90);
    expectDeg("-90", "dec", -90);
    expectDeg("23 59 59.999", "ra", 15 * (24 - 0.001 / 3600));
  });

  it("rejects text that is not an angle with a reason", () => {
    expectInvalid("", "dec", /empty/);
    expectInvalid("   ", "dec", /empty/);
    expectInvalid("abc", "ra", /not an angle/);
    expectInvalid("12 30 00 5", "ra", /not an angle/);
    expectInvalid("12.5 30 00", "ra", /fraction/);
    expectInvalid("12s30m", "dec", /not an angle/);
    expectInvalid("12:30:", "ra", /not an angle/);
    expectInvalid("12::30", "ra", /not an angle/);
    expectInvalid("12 30 00x", "ra", /not an angle/);
    expectInvalid("NaN", "ra", /not an angle/);
    expectInvalid("+12 30 00", "dec", /hours/, "h");
    expectInvalid("12h30m", "dec", /hours/);
    expectInvalid("12 30 00", "ra", /rad/, "rad");
  });

  it("never throws: a column of mixed values gives degrees, NaN and reasons", () => {
    const col = parseAngles(["10 00 00", null, "+400", "bad", "00 00 00"], "ra");
    expect(Array.from(col.deg.slice(0, 1))).toEqual([150]);
    expect(col.deg[4]).toBe(0);
    expect(col.invalid).toBe(3);
    expect(col.reasons[1]).toMatch(/empty/);
    expect(col.reasons[2]).toMatch(/outside \[0, 360\) deg/);
    expect(col.reasons[0]).toBeUndefined();
    expect(col.reasons[3]).toMatch(/not an angle/);
    expect(parseAngles([], "dec").deg.length).toBe(0);
  });

  it("checks numeric columns in their unit", () => {
    const col = anglesFromNumbers(new Float64Array([0, 359.999, 360, NaN, -1]), "ra");
    expect(col.invalid).toBe(3);
    expect(col.reasons[3]).toMatch(/not a number/);
    expect(angleFromNumber(23.5, "ra", "h").deg).toBe(352.5);
    expect(angleFromNumber(1, "dec", "h").reason).toMatch(/hours/);
    expect(angleFromNumber(Math.PI / 2, "dec", "rad").deg).toBe(90);
  });

  it("parses RA and Dec of the Meeus Example 17.a stars", () => {
    // Meeus, Astronomical Algorithms 2nd ed. (1998), Example 17.a, p. 110: Arcturus and Spica.
    expectDeg("14h15m39.7s", "ra", 15 * (14 + 15 / 60 + 39.7 / 3600));
    expectDeg("+19°10′57″", "dec", 19 + 10 / 60 + 57 / 3600);
    expectDeg("−11°09′41″", "dec", -(11 + 9 / 60 + 41 / 3600));
    expect(parseRa("13 25 11.6").deg).toBeCloseTo(15 * (13 + 25 / 60 + 11.6 / 3600), 12);
  });
});

describe("sexagesimal parsing of arbitrary text", () => {
  it("never throws and returns either an in-range angle or NaN with a reason", () => {
    // Seeded random strings over digits, signs, separators and markers (LCG, common practice).
    const alphabet = ["0", "1", "5", "9", "12", "59", "60", "99", ".", " ", ":", "h", "m", "s", "d", "°", "'", "′", '"', "″", "-", "+", "\u2212", "e", "x", "deg"];
    let seed = 777;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    let valid = 0;
    for (let i = 0; i < 20000; i++) {
      let t = "";
      const len = 1 + Math.floor(rnd() * 9);
      for (let k = 0; k < len; k++) t += alphabet[Math.floor(rnd() * alphabet.length)]!;
      for (const kind of ["ra", "dec"] as const) {
        for (const unit of [undefined, "deg", "rad", "h"] as const) {
          const r = parseAngle(t, kind, unit);
          if (r.reason === undefined) {
            valid++;
            expect(Number.isFinite(r.deg), t).toBe(true);
            if (kind === "ra") expect(r.deg >= 0 && r.deg < 360, t).toBe(true);
            else expect(Math.abs(r.deg) <= 90, t).toBe(true);
          } else {
            expect(r.deg, t).toBeNaN();
            expect(r.reason.length).toBeGreaterThan(0);
          }
        }
      }
    }
    expect(valid).toBeGreaterThan(1000);
  });

  it("accepts no-break and thin spaces as separators", () => {
    expectDeg("12\u00a030\u00a000", "ra", 187.5);
    expectDeg("+12\u202f30\u202f00", "dec", 12.5);
  });
});

describe("angle units", () => {
  it("maps FITS, VOTable and CDS unit strings to deg, rad or h and rejects others", () => {
    // Unit spellings: FITS Standard 4.0 §4.3 / VOUnits ("deg", "rad", "h"), CDS ReadMe ("h:m:s", "d:m:s").
    expect(parseAngleUnit("deg")).toBe("deg");
    expect(parseAngleUnit("degrees")).toBe("deg");
    expect(parseAngleUnit('"d:m:s"')).toBe("deg");
    expect(parseAngleUnit("rad")).toBe("rad");
    expect(parseAngleUnit("h")).toBe("h");
    expect(parseAngleUnit("hourangle")).toBe("h");
    expect(parseAngleUnit('"h:m:s"')).toBe("h");
    expect(parseAngleUnit(undefined)).toBeUndefined();
    expect(parseAngleUnit(" ")).toBeUndefined();
    expect(parseAngleUnit("km/s")).toBeNull();
  });
});

describe("sexagesimal formatting", () => {
  it("carries 59.9995 s into the minutes field", () => {
    // Domain reference §2 pitfall: rounding 59.9995 s to 60.000 must carry. 59.9995 itself is a
    // binary tie (it lands either side after the /15), so the check uses 59.99951 and 59.9996.
    const ra = 15 * (1 + 2 / 60 + 59.99951 / 3600);
    expect(formatRa(ra, 3)).toBe("01:03:00.000");
    expect(formatRa(ra, 5)).toBe("01:02:59.99951");
    expect(formatRa(15 * (23 + 59 / 60 + 59.9996 / 3600), 3)).toBe("00:00:00.000");
    const dec = -(10 + 59 / 60 + 59.99996 / 3600);
    expect(formatDec(dec, 3)).toBe("-11:00:00.000");
  });

  it("wraps 23:59:59.9999 to 00:00:00.00 and keeps the sign of small negative declinations", () => {
    expect(formatRa(15 * (24 - 0.0001 / 3600), 2)).toBe("00:00:00.00");
    expect(formatDec(-0.5, 1)).toBe("-00:30:00.0");
    expect(formatDec(-1e-9, 1)).toBe("+00:00:00.0");
    expect(formatDec(90, 0)).toBe("+90:00:00");
    expect(formatRa(NaN)).toBe("");
  });

  it("formats in the letter and symbol styles", () => {
    expect(formatRa(187.70593075, 2, "letters")).toBe("12h30m49.42s");
    expect(formatDec(12.3911233056, 1, "symbols")).toBe("+12°23′28.0″");
    expect(formatDec(-12.3911233056, 1, "space")).toBe("-12 23 28.0");
  });

  it("round-trips parse(format(x)) to the printed precision", () => {
    // Seeded grid (LCG, common practice) over the whole sphere.
    let seed = 12345;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    for (let i = 0; i < 500; i++) {
      const ra = rnd() * 360;
      const dec = rnd() * 180 - 90;
      const r = parseRa(formatRa(ra, 4));
      const d = parseDec(formatDec(dec, 3));
      // Half of the last printed digit: 0.00005 s of time = 0.00075 arcsec; 0.0005 arcsec.
      const dra = Math.abs(r.deg - ra);
      expect(Math.min(dra, 360 - dra) * 3600).toBeLessThan(0.00075 + 1e-9);
      expect(Math.abs(d.deg - dec) * 3600).toBeLessThan(0.0005 + 1e-9);
    }
  });
});
