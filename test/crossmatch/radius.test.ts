import { describe, expect, it } from "vitest";
import { formatAngleArcsec, parseAngleArcsec } from "../../src/crossmatch/radius.js";

describe("parseAngleArcsec", () => {
  it("reads arcsec, arcmin, degrees and milliarcseconds (1 deg = 60 arcmin = 3600 arcsec, IAU definitions)", () => {
    expect(parseAngleArcsec("2arcsec")).toBe(2);
    expect(parseAngleArcsec("0.5arcmin")).toBe(30);
    expect(parseAngleArcsec("1e-3deg")).toBeCloseTo(3.6, 12);
    expect(parseAngleArcsec("300mas")).toBeCloseTo(0.3, 12);
    expect(parseAngleArcsec(" 1.5 arcsec ")).toBe(1.5);
    expect(parseAngleArcsec("3\"")).toBe(3);
  });

  it("refuses a number without a unit, an unknown unit, a negative angle and more than 180 degrees", () => {
    expect(() => parseAngleArcsec("2", "--radius")).toThrow(/--radius: the angle needs a unit.*2arcsec/);
    expect(() => parseAngleArcsec("2parsec", "--radius")).toThrow(/unknown angle unit "parsec"/);
    expect(() => parseAngleArcsec("-1arcsec")).toThrow(/>= 0/);
    expect(() => parseAngleArcsec("200deg")).toThrow(/180 degrees/);
    expect(() => parseAngleArcsec("1e400arcsec", "--radius")).toThrow(/--radius: the number is too large/);
    expect(() => parseAngleArcsec("two arcsec")).toThrow(/not an angle/);
  });

  it("formatAngleArcsec and parseAngleArcsec are inverse", () => {
    for (const a of [0.0005, 0.3, 2, 59, 60, 90, 3600, 7200.5, 648000]) {
      expect(parseAngleArcsec(formatAngleArcsec(a))).toBeCloseTo(a, 9);
    }
  });
});
