import { describe, expect, it } from "vitest";
import fixture from "../reference/sky/frames.json";
import {
  convertPosition,
  convertPositions,
  angleDiffDeg,
  separationDeg,
  rotation,
  multiply,
  transpose,
  ICRS_TO_GALACTIC,
  ICRS_TO_SUPERGALACTIC,
  type Mat3,
} from "../../src/sky/index.js";

// 1e-9 deg: far below any catalogue's precision, above float64 round-off of the rotations.
const TOL_DEG = 1e-9;
// Against astropy 5.2.1: its Galactic frame is defined through FK4, 0.016-0.025″ from the Hipparcos
// matrix (domain reference §3.1); 0.05″ as the issue asks.
const TOL_ASTROPY_ARCSEC = 0.05;
// Round trips: float64 rotations, 1e-9 arcsec.
const TOL_ROUND_TRIP_ARCSEC = 1e-9;

function expectAt(got: [number, number], lon: number, lat: number, tol = TOL_DEG) {
  expect(Math.abs(got[1] - lat), `lat ${got[1]} vs ${lat}`).toBeLessThan(tol);
  if (Math.abs(lat) < 89.999) expect(angleDiffDeg(got[0], lon), `lon ${got[0]} vs ${lon}`).toBeLessThan(tol);
}

describe("ICRS to Galactic", () => {
  it("reproduces the ERFA/SOFA t_icrs2g check value", () => {
    // ERFA test t_icrs2g: (5.9338074302227188, -1.1784870613579944) rad -> (320, -45) deg exactly.
    const [l, b] = convertPosition(5.9338074302227188 * (180 / Math.PI), -1.1784870613579944 * (180 / Math.PI), "icrs", "galactic");
    expect(angleDiffDeg(l, 320)).toBeLessThan(TOL_DEG);
    expect(Math.abs(b - -45)).toBeLessThan(TOL_DEG);
  });

  it("puts the published north Galactic pole at b = +90", () => {
    // Hipparcos Catalogue (ESA 1997, SP-1200 Vol. 1 §1.5.3): NGP at ICRS (192.85948, +27.12825) deg.
    expect(convertPosition(192.85948, 27.12825, "icrs", "galactic")[1]).toBeGreaterThan(90 - TOL_DEG);
    expectAt(convertPosition(0, 90, "galactic", "icrs"), 192.85948, 27.12825);
  });

  it("puts the north celestial pole at l = 90 + l_Omega, b = delta_NGP", () => {
    // Hipparcos Catalogue §1.5.3: l_Omega = 32.93192 deg, so the NCP is at (122.93192, +27.12825).
    expectAt(convertPosition(0, 90, "icrs", "galactic"), 122.93192, 27.12825);
    // The ascending node of the Galactic plane on the equator, at RA = alpha_NGP + 90 = 282.85948 deg.
    expectAt(convertPosition(282.85948, 0, "icrs", "galactic"), 32.93192, 0);
  });

  it("puts the Galactic centre where the reference sheet computed it", () => {
    // Domain reference sheet §3.1, computed with astropy 8.0.1 (ERFA matrix): (0, 0) -> (266.404994801, -28.936173960).
    expectAt(convertPosition(0, 0, "galactic", "icrs"), 266.404994801, -28.93617396, 1e-8);
    expectAt(convertPosition(266.404994801, -28.93617396, "icrs", "galactic"), 0, 0, 1e-8);
    // Same sheet: (l, b) = (90, 0) -> (318.0043868, +48.3296424).
    expectAt(convertPosition(90, 0, "galactic", "icrs"), 318.0043868, 48.3296424, 1e-6);
    // Same sheet: ICRS (187.70593075, +12.39112331) -> (283.777739, +74.491156).
    expectAt(convertPosition(187.70593075, 12.39112331, "icrs", "galactic"), 283.777739, 74.491156, 1e-6);
  });
});

describe("Galactic to supergalactic", () => {
  it("puts the published supergalactic pole and origin at SGB = 90 and (0, 0)", () => {
    // de Vaucouleurs et al. 1976 (RC2) as stated by Lahav et al. 2000, MNRAS 312, 166:
    // north SG pole at (l, b) = (47.37, +6.32), SGL zero at (137.37, 0).
    expect(convertPosition(47.37, 6.32, "galactic", "supergalactic")[1]).toBeGreaterThan(90 - TOL_DEG);
    expectAt(convertPosition(137.37, 0, "galactic", "supergalactic"), 0, 0);
    expectAt(convertPosition(0, 90, "supergalactic", "galactic"), 47.37, 6.32);
  });

  it("puts the SG pole and origin in ICRS where they are published", () => {
    // Published ~18.9h, +15.7 (pole) and ~2.82h, +59.5 (origin) (Lahav et al. 2000); to the
    // sheet's computed values (domain reference §3.2, computed with astropy 8.0.1) at 1e-6 deg.
    const pole = convertPosition(0, 90, "supergalactic", "icrs");
    expect(Math.abs(pole[0] / 15 - 18.9)).toBeLessThan(0.05);
    expect(Math.abs(pole[1] - 15.7)).toBeLessThan(0.05);
    expectAt(pole, 283.75409, 15.708936, 1e-6);
    const origin = convertPosition(0, 0, "supergalactic", "icrs");
    expect(Math.abs(origin[0] / 15 - 2.82)).toBeLessThan(0.005);
    expect(Math.abs(origin[1] - 59.5)).toBeLessThan(0.05);
    expectAt(origin, 42.310123, 59.52835, 1e-6);
    // Same sheet: ICRS (187.70593075, +12.39112331) -> (SGL, SGB) = (102.880569, -2.347921).
    expectAt(convertPosition(187.70593075, 12.39112331, "icrs", "supergalactic"), 102.880569, -2.347921, 1e-6);
  });
});

describe("frames against astropy 5.2.1", () => {
  const ra = Float64Array.from(fixture.rows, (r) => r.ra);
  const dec = Float64Array.from(fixture.rows, (r) => r.dec);

  it(`agree with the astropy Galactic and Supergalactic frames at ${fixture.rows.length} points within 0.05 arcsec`, () => {
    // astropy 5.2.1 fixture, test/reference/make_sky_fixtures.py.
    expect(fixture.library).toBe("astropy 5.2.1");
    expect(fixture.rows.length).toBeGreaterThanOrEqual(500);
    const g = convertPositions(ra, dec, "icrs", "galactic");
    const sg = convertPositions(ra, dec, "icrs", "supergalactic");
    fixture.rows.forEach((r, i) => {
      expect(separationDeg(g.lonDeg[i]!, g.latDeg[i]!, r.l, r.b) * 3600, JSON.stringify(r)).toBeLessThan(TOL_ASTROPY_ARCSEC);
      expect(separationDeg(sg.lonDeg[i]!, sg.latDeg[i]!, r.sgl, r.sgb) * 3600, JSON.stringify(r)).toBeLessThan(TOL_ASTROPY_ARCSEC);
    });
  });

  it("round-trips ICRS -> Galactic -> ICRS and ICRS -> supergalactic -> ICRS", () => {
    for (const frame of ["galactic", "supergalactic"] as const) {
      const there = convertPositions(ra, dec, "icrs", frame);
      const back = convertPositions(there.lonDeg, there.latDeg, frame, "icrs");
      for (let i = 0; i < ra.length; i++) {
        expect(separationDeg(ra[i]!, dec[i]!, back.lonDeg[i]!, back.latDeg[i]!) * 3600).toBeLessThan(TOL_ROUND_TRIP_ARCSEC);
      }
    }
  });
});

describe("rotations", () => {
  const I: Mat3 = [1, 0, 0, 0, 1, 0, 0, 0, 1];
  it("are orthonormal: R times its transpose is the identity", () => {
    for (const m of [ICRS_TO_GALACTIC, ICRS_TO_SUPERGALACTIC, rotation("galactic", "supergalactic")]) {
      const p = multiply(m, transpose(m));
      p.forEach((x, k) => expect(Math.abs(x - I[k]!)).toBeLessThan(1e-15));
    }
  });

  it("compose: Galactic -> SG equals ICRS -> SG after Galactic -> ICRS", () => {
    const a = convertPosition(200, -30, "galactic", "supergalactic");
    const icrs = convertPosition(200, -30, "galactic", "icrs");
    const b = convertPosition(icrs[0], icrs[1], "icrs", "supergalactic");
    expect(separationDeg(a[0], a[1], b[0], b[1])).toBeLessThan(TOL_DEG);
  });
});

describe("convertPositions", () => {
  it("gives NaN for NaN rows and handles empty columns", () => {
    const out = convertPositions([10, NaN, 20], [0, 5, NaN], "icrs", "galactic");
    expect(Number.isNaN(out.lonDeg[0]!)).toBe(false);
    expect(out.lonDeg[1]).toBeNaN();
    expect(out.latDeg[2]).toBeNaN();
    expect(convertPositions([], [], "icrs", "supergalactic").lonDeg.length).toBe(0);
  });

  it("keeps longitudes in [0, 360) across the RA seam", () => {
    const out = convertPositions([359.9999999, 0, 1e-12], [0, 0, 0], "icrs", "galactic");
    for (const l of out.lonDeg) expect(l >= 0 && l < 360).toBe(true);
  });
});
