import { describe, expect, it } from "vitest";
import fixture from "../reference/sky/separation.json";
import { separationDeg, positionAngleDeg, parseRa, parseDec, angleDiffDeg, RAD } from "../../src/sky/index.js";

// Against the domain reference's computed values: 1e-9 deg, as that sheet suggests.
const TOL_COMPUTED_DEG = 1e-9;
// Against astropy 5.2.1 (also Vincenty in float64): 1e-9 arcsec absolute.
const TOL_FIXTURE_ARCSEC = 1e-9;
// Position angles lose precision as 1/separation: float64 inputs carry ~1e-13 deg of rounding.
const INPUT_ROUNDING_DEG = 1e-13;
const TOL_PA_FLOOR_DEG = 1e-6;

function sepOf(ra1: string, dec1: string, ra2: string, dec2: string): number {
  return separationDeg(parseRa(ra1).deg, parseDec(dec1).deg, parseRa(ra2).deg, parseDec(dec2).deg);
}

describe("separationDeg", () => {
  it("reproduces Meeus Example 17.a", () => {
    // Meeus, Astronomical Algorithms 2nd ed. (1998), Example 17.a, p. 110: published 32°47′35″
    // (rounded to 1″); 32.793010335136° computed in the domain reference sheet with astropy 8.0.1.
    const s = sepOf("14h15m39.7s", "+19°10′57″", "13h25m11.6s", "−11°09′41″");
    expect(Math.abs(s - (32 + 47 / 60 + 35 / 3600)) * 3600).toBeLessThan(0.5);
    expect(Math.abs(s - 32.793010335136)).toBeLessThan(TOL_COMPUTED_DEG);
  });

  it("reproduces the first exercise of Meeus p. 110", () => {
    // Meeus 1998, exercise p. 110: published 169°58′ (rounded to 1′); 169.962370013° computed in the
    // domain reference sheet with astropy 8.0.1.
    const s = sepOf("4h35m55.2s", "+16°30′33″", "16h29m24s", "−26°25′55″");
    expect(Math.abs(s - (169 + 58 / 60)) * 60).toBeLessThan(0.5);
    expect(Math.abs(s - 169.962370013)).toBeLessThan(TOL_COMPUTED_DEG);
  });

  it("reproduces the Duffett-Smith & Zwart example", () => {
    // Duffett-Smith & Zwart, Practical Astronomy with your Calculator or Spreadsheet, 4th ed. (2011),
    // "angle between two celestial objects": published 23°40′25.86″.
    const s = sepOf("5h13m31.7s", "-8°13′30″", "6h44m13.4s", "-16°41′11″");
    expect(Math.abs(s - (23 + 40 / 60 + 25.86 / 3600)) * 3600).toBeLessThan(0.005);
    expect(Math.abs(s - 23.6738494222)).toBeLessThan(TOL_COMPUTED_DEG);
  });

  it(`agrees with astropy 5.2.1 on ${fixture.rows.length} pairs (below 0.01 arcsec, near 180 deg, poles, RA seam)`, () => {
    // astropy 5.2.1 fixture, test/reference/make_sky_fixtures.py.
    expect(fixture.library).toBe("astropy 5.2.1");
    expect(fixture.rows.length).toBeGreaterThanOrEqual(500);
    const kinds = new Set<string>();
    for (const r of fixture.rows) {
      kinds.add(r.kind);
      const s = separationDeg(r.ra1, r.dec1, r.ra2, r.dec2);
      expect(Math.abs(s - r.sep_deg) * 3600, `${r.kind} ${JSON.stringify(r)}`).toBeLessThan(TOL_FIXTURE_ARCSEC);
    }
    expect([...kinds].sort()).toEqual(["below_0.01_arcsec", "near_180_deg", "poles", "ra_seam", "random"]);
  });

  it("resolves 0.001 arcsec, where the cosine law returns 0", () => {
    // Domain reference §1 (truth from mpmath at 50 digits there): at dec 30 along RA, 0.001″ -> 0.0010000″.
    const dec = 30;
    const dRa = 0.001 / 3600 / Math.cos(dec / RAD);
    const s = separationDeg(10, dec, 10 + dRa, dec) * 3600;
    // Rounding 10 + dRa to float64 moves the point by up to 1.8e-15 deg: 6e-9 of this separation.
    expect(Math.abs(s - 0.001) / 0.001).toBeLessThan(1e-7);
  });

  it("is stable for antipodal points", () => {
    // Domain reference §1: 1e-6 deg short of the antipode is 179.999999 deg with the atan2 form.
    expect(Math.abs(separationDeg(10, 20, 190, -20 + 1e-6) - 179.999999)).toBeLessThan(1e-9);
    expect(separationDeg(0, 0, 180, 0)).toBe(180);
    expect(separationDeg(45, 90, 200, -90)).toBe(180);
  });

  it("is zero for the same point, symmetric, and the same on both sides of RA 0/360", () => {
    expect(separationDeg(123.4, -56.7, 123.4, -56.7)).toBe(0);
    expect(Math.abs(separationDeg(10, 10, 20, 30) - separationDeg(20, 30, 10, 10))).toBeLessThan(1e-12);
    expect(separationDeg(359.99, 0, 0.01, 0)).toBeCloseTo(0.02, 12);
    expect(separationDeg(-0.01, 0, 0.01, 0)).toBeCloseTo(0.02, 12);
    // Both at the pole: cos(90 deg) is 6e-17 in float64, so "zero" is below 1e-12 deg.
    expect(separationDeg(0, 90, 180, 90)).toBeLessThan(1e-12);
  });

  it("gives NaN for NaN input", () => {
    expect(separationDeg(NaN, 0, 0, 0)).toBeNaN();
    expect(separationDeg(0, 0, 0, NaN)).toBeNaN();
  });
});

describe("positionAngleDeg", () => {
  it("agrees with astropy 5.2.1 position_angle within the precision the separation allows", () => {
    for (const r of fixture.rows) {
      const tol = TOL_PA_FLOOR_DEG + (INPUT_ROUNDING_DEG / Math.max(r.sep_deg, 1e-300)) * RAD;
      const pa = positionAngleDeg(r.ra1, r.dec1, r.ra2, r.dec2);
      expect(angleDiffDeg(pa, r.pa_deg), JSON.stringify(r)).toBeLessThan(tol);
    }
  });

  it("is 0 due north, 90 due east, 180 due south and 270 due west", () => {
    // Convention east of north (IAU; Meeus 1998 ch. 17), common practice.
    expect(positionAngleDeg(10, 0, 10, 1)).toBe(0);
    expect(positionAngleDeg(10, 0, 11, 0)).toBeCloseTo(90, 12);
    expect(positionAngleDeg(10, 0, 10, -1)).toBeCloseTo(180, 12);
    expect(positionAngleDeg(10, 0, 9, 0)).toBeCloseTo(270, 12);
    expect(positionAngleDeg(359.5, 0, 0.5, 0)).toBeCloseTo(90, 12);
  });

  it("stays in [0, 360)", () => {
    for (const r of fixture.rows) {
      const pa = positionAngleDeg(r.ra1, r.dec1, r.ra2, r.dec2);
      expect(pa >= 0 && pa < 360).toBe(true);
    }
  });
});
