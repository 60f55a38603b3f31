import { describe, expect, it } from "vitest";
import {
  APEXES,
  FRAME_FORMS,
  VELOCITY_FRAMES,
  convertRedshifts,
  frameToHelio,
  galacticUnitVectors,
  helioToFrame,
  solarMotion,
  SUN_CMB_PLANCK2018,
  SUN_LG_YTS1977,
} from "../../src/cosmology/restframes.js";
import { C_KMS } from "../../src/cosmology/constants.js";
import { angleDiffDeg, lonLatOf, unitVector } from "../../src/sky/index.js";
import framesFixture from "../reference/cosmology/frames_astropy.json";

// Velocities are compared in cz units (km/s). The reference values are printed to 1e-3 km/s.
const TOL_KMS_PRINTED = 2e-3;
// Analytic identities hold to float64 round-off: 1e-9 km/s in cz.
const TOL_KMS_EXACT = 1e-9;
// Round trips in z: float64 round-off of a few operations.
const TOL_Z_ROUNDTRIP = 1e-15;

const cz = (z: number) => z * C_KMS;
const gal = (lDeg: number, bDeg: number) => Float64Array.from(unitVector(lDeg, bDeg));

describe("apex constants", () => {
  it("the Schoenrich et al. 2010 solar motion is 18.04 km/s toward (47.80, +23.69)", () => {
    // (U, V, W) = (11.1, 12.24, 7.25) km/s, Schoenrich, Binney & Dehnen 2010; direction as computed
    // from (U, V, W) in the domain reference §4.2 (rounded to 0.01 deg / 0.01 km/s).
    const s = solarMotion("lsr");
    expect(s.name).toBe("sbd2010");
    expect(Math.abs(s.speedKmS - 18.04)).toBeLessThan(0.005);
    expect(angleDiffDeg(s.lDeg, 47.8)).toBeLessThan(0.005);
    expect(Math.abs(s.bDeg - 23.69)).toBeLessThan(0.005);
  });

  it("the CMB default is Planck 2018 and the Fixsen et al. 1996 dipole is 370.6 km/s", () => {
    // Planck 2018 I Table 2: 369.82 km/s toward (264.021, 48.253); Fixsen et al. 1996:
    // c * 3.372 mK / 2.728 K = 370.6 km/s toward (264.14, 48.26).
    const p = solarMotion("cmb");
    expect(p.name).toBe("planck2018");
    expect(Math.abs(p.speedKmS - 369.82)).toBeLessThan(1e-9);
    expect(angleDiffDeg(p.lDeg, 264.021)).toBeLessThan(1e-9);
    expect(Math.abs(p.bDeg - 48.253)).toBeLessThan(1e-9);
    const f = solarMotion("cmb", "fixsen1996");
    expect(Math.abs(f.speedKmS - 370.6)).toBeLessThan(0.05);
  });

  it("Planck 2018 minus Yahil et al. 1977 gives the LG motion of 626.8 km/s toward (275.65, +30.00)", () => {
    // Vector difference of the two solar motions: domain reference §4.1 computes 626.8 km/s toward
    // (275.65, 30.00), in line with COBE's 627 +- 22 km/s toward (276 +- 3, 30 +- 3) (Kogut et al. 1993, ApJ 419, 1).
    const d = [0, 1, 2].map((k) => SUN_CMB_PLANCK2018[k]! - SUN_LG_YTS1977[k]!) as [number, number, number];
    const [l, b] = lonLatOf(...d);
    expect(Math.abs(Math.hypot(...d) - 626.8)).toBeLessThan(0.05);
    expect(angleDiffDeg(l, 275.65)).toBeLessThan(0.005);
    expect(Math.abs(b - 30.0)).toBeLessThan(0.005);
  });

  it("every frame but helio has a default apex and every apex a citation", () => {
    for (const f of VELOCITY_FRAMES) expect(solarMotion(f).frame).toBe(f);
    for (const a of APEXES) expect(a.citation.length).toBeGreaterThan(10);
  });

  it("an unknown apex, an apex of another frame or an apex for helio is a usage error", () => {
    expect(() => solarMotion("cmb", "yts1977")).toThrow(/unknown apex for frame cmb/);
    expect(() => solarMotion("lg", "nope")).toThrow(/yts1977/);
    expect(() => solarMotion("helio", "planck2018")).toThrow(/no apex/);
    expect(() => solarMotion("bogus" as never)).toThrow(/unknown velocity frame/);
  });
});

describe("a galaxy at the apex, the anti-apex and 90 degrees away", () => {
  const sun = solarMotion("cmb");
  const beta = sun.speedKmS / C_KMS;
  const zh = 0.05;
  const at = gal(sun.lDeg, sun.bDeg);
  const anti = gal(sun.lDeg + 180, -sun.bDeg);
  // 90 deg away: on the great circle through the Galactic pole direction orthogonal to the apex.
  const ninety = gal(sun.lDeg, sun.bDeg - 90);

  it("the exact form gives (1 + z)/(1 -+ beta) and leaves the 90 degree galaxy alone", () => {
    // Analytic: 1 + z_frame = (1 + z_helio)/(1 - beta cos theta), theta = 0, 180, 90 deg.
    expect(Math.abs(cz(helioToFrame([zh], at, sun)[0]!) - cz((1 + zh) / (1 - beta) - 1))).toBeLessThan(TOL_KMS_EXACT);
    expect(Math.abs(cz(helioToFrame([zh], anti, sun)[0]!) - cz((1 + zh) / (1 + beta) - 1))).toBeLessThan(TOL_KMS_EXACT);
    expect(Math.abs(cz(helioToFrame([zh], ninety, sun)[0]!) - cz(zh))).toBeLessThan(TOL_KMS_EXACT);
  });

  it("the relativistic form gives sqrt((1 + beta)/(1 - beta)) at the apex and 1/gamma at 90 degrees", () => {
    // Analytic special-relativistic Doppler factors (common practice).
    const g = 1 / Math.sqrt(1 - beta * beta);
    expect(Math.abs(cz(helioToFrame([zh], at, sun, "relativistic")[0]!) - cz((1 + zh) * Math.sqrt((1 + beta) / (1 - beta)) - 1))).toBeLessThan(TOL_KMS_EXACT);
    expect(Math.abs(cz(helioToFrame([zh], anti, sun, "relativistic")[0]!) - cz((1 + zh) * Math.sqrt((1 - beta) / (1 + beta)) - 1))).toBeLessThan(TOL_KMS_EXACT);
    expect(Math.abs(cz(helioToFrame([zh], ninety, sun, "relativistic")[0]!) - cz((1 + zh) / g - 1))).toBeLessThan(TOL_KMS_EXACT);
  });

  it("the additive form adds +-|V| at the apex and anti-apex and nothing at 90 degrees", () => {
    expect(Math.abs(cz(helioToFrame([zh], at, sun, "additive")[0]!) - (cz(zh) + sun.speedKmS))).toBeLessThan(TOL_KMS_EXACT);
    expect(Math.abs(cz(helioToFrame([zh], anti, sun, "additive")[0]!) - (cz(zh) - sun.speedKmS))).toBeLessThan(TOL_KMS_EXACT);
    expect(Math.abs(cz(helioToFrame([zh], ninety, sun, "additive")[0]!) - cz(zh))).toBeLessThan(TOL_KMS_EXACT);
  });

  it("the relativistic form with the observed angle equals gamma (1 + beta cos theta') with the de-aberrated angle", () => {
    // Aberration cos theta' = (cos theta - beta)/(1 - beta cos theta) and nu' = nu gamma (1 + beta cos theta')
    // (Rybicki & Lightman 1979, Radiative Processes, §4.8; from memory): an independent route to the same shift.
    const g = 1 / Math.sqrt(1 - beta * beta);
    for (const thetaDeg of [10, 45, 80, 120, 170]) {
      const n = gal(sun.lDeg, sun.bDeg - thetaDeg);
      const c = Math.cos((thetaDeg * Math.PI) / 180);
      const cp = (c - beta) / (1 - beta * c);
      const want = (1 + zh) * g * (1 + beta * cp) - 1;
      expect(Math.abs(cz(helioToFrame([zh], n, sun, "relativistic")[0]!) - cz(want))).toBeLessThan(1e-8);
    }
  });
});

describe("the additive and exact forms", () => {
  it("differ by the first-order cross term z beta cos theta, to second order in beta", () => {
    // (1 + z)/(1 - b) - 1 = z + b + z b + O(b^2): the additive form misses z b (domain reference §4.1).
    const sun = solarMotion("cmb");
    const beta = sun.speedKmS / C_KMS;
    for (const zh of [0, 0.003, 0.05, 0.2]) {
      for (const thetaDeg of [0, 30, 90, 150, 180]) {
        const n = gal(sun.lDeg, sun.bDeg - thetaDeg);
        const bc = beta * Math.cos((thetaDeg * Math.PI) / 180);
        const diff = cz(helioToFrame([zh], n, sun, "exact")[0]!) - cz(helioToFrame([zh], n, sun, "additive")[0]!);
        // Second order: (1 + z) b^2 c ~ 0.55 km/s at z = 0.2.
        expect(Math.abs(diff - cz(zh * bc))).toBeLessThan(cz((1 + zh) * beta * beta * 1.01));
      }
    }
  });

  it("misses 18.5 km/s at cz = 15 000 km/s toward the CMB apex", () => {
    // Domain reference §4.1 / §4.3 (computed with astropy 8.0.1): additive 15 369.82, relativistic 15 388.56 km/s.
    const z = [15000 / C_KMS];
    const ra = [167.942]; // the Planck apex in ICRS, Planck 2018 I as quoted in domain reference §4.2
    const dec = [-6.944];
    expect(Math.abs(cz(convertRedshifts(z, ra, dec, { frame: "helio" }, { frame: "cmb" }, "additive")[0]!) - 15369.82)).toBeLessThan(0.01);
    expect(Math.abs(cz(convertRedshifts(z, ra, dec, { frame: "helio" }, { frame: "cmb" }, "relativistic")[0]!) - 15388.56)).toBeLessThan(0.01);
  });
});

describe("a galaxy at (187.70593075, +12.39112331) with cz_helio = 1284 km/s", () => {
  // Check values of domain reference §4.3, computed there with astropy 8.0.1 / pyerfa 2.0.1.5
  // (the LSR value also from astropy's LSR transform, 1288.5142). They are first-order (additive)
  // corrections except the CMB "exact" row, (1 + z)/(1 - beta cos theta).
  const ra = [187.70593075];
  const dec = [12.39112331];
  const z = [1284 / C_KMS];
  const table: [string, string, "exact" | "additive", number][] = [
    ["lsr", "sbd2010", "additive", 1288.514],
    ["gsr", "sbd2010+iau1985", "additive", 1231.382],
    ["gsr", "astropy4", "additive", 1228.537],
    ["lg", "yts1977", "additive", 1166.108],
    ["lg", "km1996", "additive", 1179.958],
    ["lg", "cvdb1999", "additive", 1182.094],
    ["cmb", "planck2018", "additive", 1611.84],
    ["cmb", "planck2018", "exact", 1613.604],
  ];
  for (const [frame, apex, form, want] of table) {
    it(`goes to ${frame} (${apex}, ${form}) at ${want} km/s`, () => {
      const got = cz(convertRedshifts(z, ra, dec, { frame: "helio" }, { frame: frame as never, apex }, form)[0]!);
      expect(Math.abs(got - want)).toBeLessThan(TOL_KMS_PRINTED);
    });
  }

  it("goes to the CMB frame with the relativistic form within 0.15 km/s of 1613.473", () => {
    // Domain reference §4.3 gives 1613.473 for gamma (1 + z)(1 + beta cos theta) with the observed angle
    // taken as the frame's; our relativistic form de-aberrates (the previous describe block), a
    // difference of order beta^2 c sin^2 theta (~0.1 km/s here).
    const got = cz(convertRedshifts(z, ra, dec, { frame: "helio" }, { frame: "cmb" }, "relativistic")[0]!);
    expect(Math.abs(got - 1613.473)).toBeLessThan(0.15);
  });
});

describe("against astropy's LSR and Galactocentric frames", () => {
  // astropy 5.2.1 fixture (test/reference/make_cosmology_fixtures.py): 24 seeded directions at
  // 1000 Mpc without proper motion, radial velocities after transform_to(LSR()) and to
  // Galactocentric() with the v4.0 defaults. Both are first-order vector additions (our additive form).
  const c = C_KMS;
  it("matches astropy's LSR radial velocities to 1e-5 km/s", () => {
    for (const r of framesFixture.rows) {
      const v = cz(convertRedshifts([r.cz_helio / c], [r.ra], [r.dec], { frame: "helio" }, { frame: "lsr" }, "additive")[0]!);
      expect(Math.abs(v - r.v_lsr)).toBeLessThan(1e-5);
    }
  });
  it("matches astropy's Galactocentric radial velocities to 0.05 km/s with the astropy4 apex", () => {
    // The Galactocentric axes are tilted from the Galactic ones by the Sun's height (z_sun = 20.8 pc
    // over R0 = 8.122 kpc, ~2.6e-3 rad), which moves V.n by up to a few 0.01 km/s: measured 0.038.
    for (const r of framesFixture.rows) {
      const v = cz(convertRedshifts([r.cz_helio / c], [r.ra], [r.dec], { frame: "helio" }, { frame: "gsr", apex: "astropy4" }, "additive")[0]!);
      expect(Math.abs(v - r.v_gsr)).toBeLessThan(0.05);
    }
  });
});

describe("round trips", () => {
  it("helio -> frame -> helio returns the input for every apex and form", () => {
    const zs = [0, 1e-4, 0.004, 0.03, 0.15, 1.2];
    const nGal = galacticUnitVectors([0, 90, 187.7, 266.4, 359.999, 10], [-89.9, 0, 12.4, -28.9, 0, 89.99]);
    for (const a of APEXES) {
      for (const form of FRAME_FORMS) {
        const back = frameToHelio(helioToFrame(zs, nGal, a, form), nGal, a, form);
        zs.forEach((z, i) => expect(Math.abs(back[i]! - z)).toBeLessThan(TOL_Z_ROUNDTRIP * (1 + z)));
      }
    }
  });

  it("cmb -> helio -> cmb through convertRedshifts returns the input", () => {
    const z = [0.01, 0.02];
    const ra = [10, 200];
    const dec = [-30, 45];
    const h = convertRedshifts(z, ra, dec, { frame: "cmb" }, { frame: "helio" });
    const back = convertRedshifts(h, ra, dec, { frame: "helio" }, { frame: "cmb" });
    z.forEach((x, i) => expect(Math.abs(back[i]! - x)).toBeLessThan(TOL_Z_ROUNDTRIP));
  });

  it("lg -> cmb equals lg -> helio -> cmb and, additively, adds (V_cmb - V_lg) . n", () => {
    const z = [0.02];
    const ra = [187.70593075];
    const dec = [12.39112331];
    const direct = convertRedshifts(z, ra, dec, { frame: "lg" }, { frame: "cmb" }, "additive")[0]!;
    const n = galacticUnitVectors(ra, dec);
    const d = [0, 1, 2].map((k) => SUN_CMB_PLANCK2018[k]! - SUN_LG_YTS1977[k]!);
    const dot = d[0]! * n[0]! + d[1]! * n[1]! + d[2]! * n[2]!;
    expect(Math.abs(cz(direct) - (cz(z[0]!) + dot))).toBeLessThan(TOL_KMS_EXACT);
  });
});

describe("edges", () => {
  it("empty input gives empty output", () => {
    expect(helioToFrame([], new Float64Array(0), solarMotion("cmb")).length).toBe(0);
    expect(convertRedshifts([], [], [], { frame: "helio" }, { frame: "cmb" }).length).toBe(0);
  });

  it("NaN redshift or position gives NaN, and the helio frame changes nothing", () => {
    const out = convertRedshifts([NaN, 0.01, 0.01], [10, NaN, 10], [10, 10, 10], { frame: "helio" }, { frame: "cmb" });
    expect(Number.isNaN(out[0]!)).toBe(true);
    expect(Number.isNaN(out[1]!)).toBe(true);
    expect(Number.isFinite(out[2]!)).toBe(true);
    expect(convertRedshifts([0.01], [10], [10], { frame: "helio" }, { frame: "helio" })[0]).toBe(0.01);
  });

  it("galaxies at the Galactic poles get the W component alone", () => {
    // The north Galactic pole, ICRS (192.85948, +27.12825) (Hipparcos Catalogue, ESA 1997 §1.5.3).
    const n = galacticUnitVectors([192.85948], [27.12825]);
    const v = cz(helioToFrame([0], n, solarMotion("lsr"), "additive")[0]!);
    expect(Math.abs(v - 7.25)).toBeLessThan(1e-6);
  });
});
