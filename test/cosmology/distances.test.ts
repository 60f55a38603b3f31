import { describe, expect, it } from "vitest";
import fixture from "../reference/cosmology/flat_lcdm_astropy.json";
import {
  angularDiameterDistanceMpc,
  comovingDistanceMpc,
  distanceModulus,
  hubbleDistanceMpc,
  luminosityDistanceFromModulus,
  luminosityDistanceMpc,
  redshiftAtDistance,
  redshiftsAtDistances,
  seriesDistanceMpc,
  checkCosmology,
  type DistanceKind,
} from "../../src/cosmology/distances.js";

// Agreement asked of the quadrature against astropy: 1e-6 relative (measured: 2e-12).
const REL_TOL_FIXTURE = 1e-6;
// astropy's z_at_value root (Brent) is itself good to ~2e-9 relative at D = 10 Mpc.
const REL_TOL_FIXTURE_INVERSE = 1e-8;
// Distance -> z_cos -> distance.
const REL_TOL_ROUNDTRIP = 1e-9;
// Distance modulus in magnitudes.
const TOL_MAG = 1e-6;

const rel = (a: number, b: number) => Math.abs(a / b - 1);

describe("flat LCDM distances against astropy", () => {
  // astropy 5.2.1 fixture: FlatLambdaCDM(H0, Om0, Tcmb0=0), made by test/reference/make_cosmology_fixtures.py.
  for (const m of fixture.models) {
    const c = { h0: m.h0, omegaM: m.omegaM };
    it(`agrees on D_C, D_L, D_A and mu for H0 = ${m.h0}, Omega_m = ${m.omegaM}`, () => {
      for (const r of m.rows) {
        if (r.z === 0) {
          expect(comovingDistanceMpc(0, c)).toBe(0);
          continue;
        }
        expect(rel(comovingDistanceMpc(r.z, c), r.dc)).toBeLessThan(REL_TOL_FIXTURE);
        expect(rel(luminosityDistanceMpc(r.z, c), r.dl)).toBeLessThan(REL_TOL_FIXTURE);
        expect(rel(angularDiameterDistanceMpc(r.z, c), r.da)).toBeLessThan(REL_TOL_FIXTURE);
        expect(Math.abs(distanceModulus(r.z, c) - r.mu!)).toBeLessThan(TOL_MAG);
      }
    });
    it(`inverts D_L and D_C like astropy's z_at_value for H0 = ${m.h0}, Omega_m = ${m.omegaM}`, () => {
      for (const v of m.inverse) {
        expect(rel(redshiftAtDistance(v.d, "luminosity", c), v.z_dl)).toBeLessThan(REL_TOL_FIXTURE_INVERSE);
        expect(rel(redshiftAtDistance(v.d, "comoving", c), v.z_dc)).toBeLessThan(REL_TOL_FIXTURE_INVERSE);
      }
    });
  }
});

describe("flat LCDM distances against closed forms and published tables", () => {
  it("Einstein-de Sitter gives D_C = 2 D_H (1 - 1/sqrt(1 + z))", () => {
    // Hogg 1999 (astro-ph/9905116) eq. 16 (Mattig form, Weinberg 1972) with Omega_M = 1, Omega_Lambda = 0.
    const c = { h0: 70, omegaM: 1 };
    for (const z of [0.001, 0.1, 1, 3, 7.5]) {
      expect(rel(comovingDistanceMpc(z, c), 2 * hubbleDistanceMpc(c) * (1 - 1 / Math.sqrt(1 + z)))).toBeLessThan(1e-12);
    }
  });

  it("Einstein-de Sitter D_A peaks at z = 1.25 with D_A = (8/27) D_H", () => {
    // Hogg 1999 Fig. 2: the (1, 0) curve of D_A/D_H has its maximum at z = 1.25 (closed form from eq. 16).
    const c = { h0: 100, omegaM: 1 };
    const dh = hubbleDistanceMpc(c);
    expect(rel(angularDiameterDistanceMpc(1.25, c), (8 / 27) * dh)).toBeLessThan(1e-12);
    expect(angularDiameterDistanceMpc(1.2, c)).toBeLessThan(angularDiameterDistanceMpc(1.25, c));
    expect(angularDiameterDistanceMpc(1.3, c)).toBeLessThan(angularDiameterDistanceMpc(1.25, c));
  });

  it("a flat empty-matter model (de Sitter) gives D_C = D_H z", () => {
    // E(z) = 1 when Omega_m = 0 (Hogg 1999 eq. 14).
    const c = { h0: 70, omegaM: 0 };
    for (const z of [0.01, 0.5, 2]) expect(rel(comovingDistanceMpc(z, c), hubbleDistanceMpc(c) * z)).toBeLessThan(1e-12);
  });

  it("reproduces the H0 = 70, Omega_m = 0.3 table of D_C, D_L, D_A and mu", () => {
    // Domain reference §6 table: scipy quad at rel 1e-12, checked there against astropy 8.0.1
    // FlatLambdaCDM(H0=70, Om0=0.3, Tcmb0=0); values printed to 1e-4 Mpc and 1e-5 mag.
    const c = { h0: 70, omegaM: 0.3 };
    const table = [
      [0.01, 42.7309, 43.1582, 42.3078, 33.17532],
      [0.05, 211.7039, 222.2891, 201.6227, 36.73459],
      [0.1, 418.4545, 460.2999, 380.4132, 38.3152],
      [0.5, 1888.6254, 2832.9381, 1259.0836, 42.26119],
      [1.0, 3303.8288, 6607.6576, 1651.9144, 44.10024],
      [3.0, 6355.6854, 25422.7417, 1588.9214, 47.02611],
    ] as const;
    for (const [z, dc, dl, da, mu] of table) {
      expect(Math.abs(comovingDistanceMpc(z, c) - dc)).toBeLessThan(6e-5);
      expect(Math.abs(luminosityDistanceMpc(z, c) - dl)).toBeLessThan(6e-5);
      expect(Math.abs(angularDiameterDistanceMpc(z, c) - da)).toBeLessThan(6e-5);
      expect(Math.abs(distanceModulus(z, c) - mu)).toBeLessThan(6e-6);
    }
  });

  it("inverts D_L = 100 Mpc to z = 0.0229447818 and D_L = 500 Mpc to z = 0.1080437737", () => {
    // Domain reference §6 inversions (scipy root finding on the quadrature).
    const c = { h0: 70, omegaM: 0.3 };
    expect(Math.abs(redshiftAtDistance(100, "luminosity", c) - 0.0229447818)).toBeLessThan(1e-10);
    expect(Math.abs(redshiftAtDistance(500, "luminosity", c) - 0.1080437737)).toBeLessThan(1e-10);
    expect(Math.abs(comovingDistanceMpc(0.0229447818, c) - 97.75699)).toBeLessThan(1e-5);
  });

  it("the low-z series matches to second order at z = 0.04", () => {
    // Domain reference §5.2 (Visser 2004 cosmography): D_L exact 176.5457 vs 2nd order 176.5456;
    // D_C exact 169.7555 vs series 169.7548 Mpc.
    const c = { h0: 70, omegaM: 0.3 };
    expect(Math.abs(seriesDistanceMpc(0.04, "luminosity", c) - 176.5456)).toBeLessThan(1e-4);
    expect(Math.abs(seriesDistanceMpc(0.04, "comoving", c) - 169.7548)).toBeLessThan(1e-4);
    expect(Math.abs(luminosityDistanceMpc(0.04, c) - 176.5457)).toBeLessThan(1e-4);
  });
});

describe("round trips", () => {
  it("distance -> z_cos -> distance returns the distance to 1e-9 for every kind", () => {
    const c = { h0: 70, omegaM: 0.3 };
    const kinds: DistanceKind[] = ["comoving", "luminosity", "angular"];
    for (const kind of kinds) {
      for (const d of [1e-3, 0.5, 10, 100, 1000, 1500, 4000, 20000]) {
        const z = redshiftAtDistance(d, kind, c);
        // Past the maximum of D_A (about 1770 Mpc near z = 1.6) there is no unique inverse, and
        // D_C stays below ~14 000 Mpc for all z <= 20: both give NaN.
        if ((kind === "angular" && d > 1500) || (kind === "comoving" && d > 15000)) {
          expect(Number.isNaN(z)).toBe(true);
          continue;
        }
        const back = kind === "comoving" ? comovingDistanceMpc(z, c) : kind === "luminosity" ? luminosityDistanceMpc(z, c) : angularDiameterDistanceMpc(z, c);
        expect(rel(back, d)).toBeLessThan(REL_TOL_ROUNDTRIP);
      }
    }
  });

  it("the angular inverse returns the low-z root below the maximum of D_A", () => {
    const c = { h0: 70, omegaM: 0.3 };
    // D_A(3) = 1588.92 Mpc (domain reference §6) is also reached on the rising branch, near z = 1.
    const z = redshiftAtDistance(1588.9214, "angular", c);
    expect(z).toBeLessThan(1.6);
    expect(rel(angularDiameterDistanceMpc(z, c), 1588.9214)).toBeLessThan(REL_TOL_ROUNDTRIP);
  });

  it("mu -> D_L -> mu round trips", () => {
    for (const mu of [20, 33.17532, 35, 47]) expect(Math.abs(5 * Math.log10(luminosityDistanceFromModulus(mu)) + 25 - mu)).toBeLessThan(1e-12);
  });
});

describe("edges", () => {
  it("negative, NaN and out-of-range distances give NaN", () => {
    const c = { h0: 70, omegaM: 0.3 };
    expect(Number.isNaN(redshiftAtDistance(-1, "luminosity", c))).toBe(true);
    expect(Number.isNaN(redshiftAtDistance(NaN, "luminosity", c))).toBe(true);
    expect(Number.isNaN(redshiftAtDistance(1e9, "comoving", c))).toBe(true);
    expect(Number.isNaN(comovingDistanceMpc(NaN, c))).toBe(true);
    expect(redshiftAtDistance(0, "comoving", c)).toBe(0);
  });

  it("an H0 or Omega_m out of range is an error naming the value", () => {
    expect(() => checkCosmology({ h0: -70, omegaM: 0.3 })).toThrow(/H0/);
    expect(() => checkCosmology({ h0: 70, omegaM: 1.5 })).toThrow(/Omega_m/);
  });
});

describe("redshiftsAtDistances (the batch inverse)", () => {
  // Twin of the one-at-a-time solve: same root to round-off (common practice for a faster twin).
  const TWIN_TOL = 1e-13;
  it("gives the roots of redshiftAtDistance for every kind, model and range, NaN where it gives NaN", () => {
    let seed = 99;
    const rnd = () => ((seed = (seed * 1103515245 + 12345) % 2147483648) / 2147483648);
    for (const c of [{ h0: 70, omegaM: 0.3 }, { h0: 67.4, omegaM: 0.315 }, { h0: 50, omegaM: 1 }, { h0: 73, omegaM: 0 }]) {
      for (const kind of ["comoving", "luminosity", "angular"] as const) {
        for (const dTop of [5, 300, 4000, 30000]) {
          const d = new Float64Array(3000);
          for (let i = 0; i < d.length; i++) d[i] = dTop * rnd() ** 2;
          d[0] = 0;
          d[1] = -1;
          d[2] = NaN;
          d[3] = 1e9;
          d[4] = dTop;
          const z = redshiftsAtDistances(d, kind, c);
          for (let i = 0; i < d.length; i++) {
            const one = redshiftAtDistance(d[i]!, kind, c);
            if (Number.isNaN(one)) expect(z[i], `d ${d[i]} ${kind}`).toBeNaN();
            else expect(Math.abs(z[i]! - one), `d ${d[i]} ${kind} ${c.omegaM}`).toBeLessThanOrEqual(TWIN_TOL * Math.max(1, one));
          }
        }
      }
    }
  });

  it("inverts D_L and D_C like astropy's z_at_value (astropy 5.2.1 fixture)", () => {
    for (const m of fixture.models) {
      const c = { h0: m.h0, omegaM: m.omegaM };
      const d = Float64Array.from(m.inverse.map((v) => v.d));
      const zl = redshiftsAtDistances(d, "luminosity", c);
      const zc = redshiftsAtDistances(d, "comoving", c);
      m.inverse.forEach((v, i) => {
        expect(rel(zl[i]!, v.z_dl)).toBeLessThan(REL_TOL_FIXTURE_INVERSE);
        expect(rel(zc[i]!, v.z_dc)).toBeLessThan(REL_TOL_FIXTURE_INVERSE);
      });
    }
  });

  it("handles an empty batch and a batch of zeros", () => {
    const c = { h0: 70, omegaM: 0.3 };
    expect(redshiftsAtDistances(new Float64Array(0), "comoving", c).length).toBe(0);
    expect(Array.from(redshiftsAtDistances(new Float64Array(3), "luminosity", c))).toEqual([0, 0, 0]);
  });
});

