import { describe, expect, it } from "vitest";
import { peculiarVelocities, modifiedRedshift, ESTIMATORS } from "../../src/cosmology/estimators.js";
import { distancesFromColumn, distancesFromModulus } from "../../src/cosmology/distance-indicators.js";
import { C_KMS } from "../../src/cosmology/constants.js";
import { comovingDistanceMpc, luminosityDistanceMpc } from "../../src/cosmology/distances.js";

const LCDM = { h0: 70, omegaM: 0.3 };
// The worked values are printed to 0.01 km/s (exact) or 0.1 km/s (others).
const TOL_KMS_2DP = 0.006;
const TOL_KMS_1DP = 0.06;

describe("the worked case mu = 35, cz_CMB = 7000 km/s, H0 = 70, Omega_m = 0.3", () => {
  // Domain reference §5.1 and §5.4 (computed there with numpy/scipy; estimators of Davis & Scrimgeour
  // 2014, MNRAS 442, 1117 and Watkins & Feldman 2015, MNRAS 450, 1868).
  const z = [7000 / C_KMS];
  const d = distancesFromModulus([35], [0.4]);

  it("finds z_cos = 0.0229447818 by inverting the luminosity distance", () => {
    const r = peculiarVelocities(z, undefined, d, "exact", LCDM);
    expect(Math.abs(r.zCos[0]! - 0.0229447818)).toBeLessThan(1e-10);
    expect(Math.abs(r.distCMpc[0]! - 97.75699)).toBeLessThan(1e-5);
  });

  it("the exact estimator gives 118.61 km/s", () => {
    expect(Math.abs(peculiarVelocities(z, undefined, d, "exact", LCDM).vPecKmS[0]! - 118.61)).toBeLessThan(TOL_KMS_2DP);
  });

  it("the linear estimator with the comoving distance gives 157.0 km/s", () => {
    expect(Math.abs(peculiarVelocities(z, undefined, d, "linear", LCDM).vPecKmS[0]! - 157.0)).toBeLessThan(TOL_KMS_1DP);
  });

  it("the logarithmic estimator with z_mod and D_L gives 126.7 km/s", () => {
    expect(Math.abs(peculiarVelocities(z, undefined, d, "log", LCDM).vPecKmS[0]! - 126.7)).toBeLessThan(TOL_KMS_1DP);
  });

  it("the errors follow the stated first-order formulas", () => {
    const zc = 0.0229447818;
    const dL = 100;
    const sDL = (dL * Math.LN10 * 0.4) / 5;
    // dD_L/dz at z_cos from the quadrature by a central difference (independent of the code's derivative).
    const h = 1e-6;
    const dDLdz = (luminosityDistanceMpc(zc + h, LCDM) - luminosityDistanceMpc(zc - h, LCDM)) / (2 * h);
    const dDCdz = (comovingDistanceMpc(zc + h, LCDM) - comovingDistanceMpc(zc - h, LCDM)) / (2 * h);
    const sZc = sDL / dDLdz;
    const ex = peculiarVelocities(z, undefined, d, "exact", LCDM).vPecErrKmS[0]!;
    expect(Math.abs(ex - (C_KMS * (1 + z[0]!) * sZc) / (1 + zc) ** 2)).toBeLessThan(1e-3);
    const lin = peculiarVelocities(z, undefined, d, "linear", LCDM).vPecErrKmS[0]!;
    expect(Math.abs(lin - 70 * sZc * dDCdz)).toBeLessThan(1e-3);
    const lg = peculiarVelocities(z, undefined, d, "log", LCDM).vPecErrKmS[0]!;
    const czm = C_KMS * modifiedRedshift(z[0]!, LCDM)[0];
    expect(Math.abs(lg - (czm * Math.LN10 * 0.4) / 5)).toBeLessThan(1e-6);
    // Domain reference §5.5: sigma_v ~ cz (ln 10/5) sigma_mu = 1289 km/s for cz = 7000, sigma_mu = 0.4,
    // a low-z rule of thumb; the (1 + z) factors of the full forms move it by up to ~6 % here.
    for (const e of [ex, lin, lg]) expect(Math.abs(e / 1289 - 1)).toBeLessThan(0.07);
  });

  it("a redshift error adds in quadrature", () => {
    const sz = 30 / C_KMS;
    const dNoErr = distancesFromModulus([35]);
    const r = peculiarVelocities(z, [sz], dNoErr, "linear", LCDM);
    // No distance error: sigma_v is NaN (unknown), not the redshift part alone.
    expect(Number.isNaN(r.vPecErrKmS[0]!)).toBe(true);
    const exact0 = peculiarVelocities(z, undefined, distancesFromModulus([35], [0]), "exact", LCDM).vPecErrKmS[0]!;
    const exact30 = peculiarVelocities(z, [sz], distancesFromModulus([35], [0]), "exact", LCDM).vPecErrKmS[0]!;
    expect(exact0).toBe(0);
    expect(Math.abs(exact30 - 30 / (1 + 0.0229447818))).toBeLessThan(1e-6);
  });

  it("bounds are the estimator at the far and near distance bounds, asymmetric about v", () => {
    const r = peculiarVelocities(z, undefined, d, "exact", LCDM);
    const far = peculiarVelocities(z, undefined, distancesFromModulus([35.4]), "exact", LCDM).vPecKmS[0]!;
    const near = peculiarVelocities(z, undefined, distancesFromModulus([34.6]), "exact", LCDM).vPecKmS[0]!;
    expect(r.vPecLoKmS[0]).toBeCloseTo(far, 9);
    expect(r.vPecHiKmS[0]).toBeCloseTo(near, 9);
    const v = r.vPecKmS[0]!;
    expect(v - r.vPecLoKmS[0]!).not.toBeCloseTo(r.vPecHiKmS[0]! - v, 0);
    // The luminosity-distance bounds of mu +- sigma are 10^((mu -+ sigma - 25)/5) (Hogg 1999 eq. 25).
    expect(r.distLLoMpc[0]).toBeCloseTo(Math.pow(10, (34.6 - 25) / 5), 8);
    expect(r.distLHiMpc[0]).toBeCloseTo(Math.pow(10, (35.4 - 25) / 5), 8);
  });
});

describe("the estimators at low redshift", () => {
  it("agree to 1 % of cz for small peculiar velocities at z < 0.01", () => {
    // Common practice: all three reduce to v = cz - H0 d when v << cz and z << 1.
    for (const zc of [0.002, 0.005, 0.01]) {
      for (const v of [-50, 20, 80]) {
        const zObs = (1 + zc) * (1 + v / C_KMS) - 1;
        const d = distancesFromColumn([luminosityDistanceMpc(zc, LCDM)]);
        const got = ESTIMATORS.map((e) => peculiarVelocities([zObs], undefined, d, e, LCDM).vPecKmS[0]!);
        // The exact estimator returns the input velocity.
        expect(Math.abs(got[0]! - v)).toBeLessThan(1e-6);
        for (const g of got) expect(Math.abs(g - v)).toBeLessThan(0.01 * C_KMS * zc + 1e-9);
      }
    }
  });

  it("the exact estimator inverts the redshift composition for any distance kind", () => {
    // (1 + z_obs) = (1 + z_cos)(1 + v/c) (Davis & Scrimgeour 2014): synthetic truth v = 300 km/s.
    for (const kind of ["comoving", "luminosity", "angular"] as const) {
      for (const zc of [0.01, 0.1, 0.5]) {
        const dc = comovingDistanceMpc(zc, LCDM);
        const dist = kind === "comoving" ? dc : kind === "luminosity" ? dc * (1 + zc) : dc / (1 + zc);
        const zObs = (1 + zc) * (1 + 300 / C_KMS) - 1;
        const r = peculiarVelocities([zObs], undefined, distancesFromColumn([dist], [1], kind), "exact", LCDM);
        expect(Math.abs(r.vPecKmS[0]! - 300)).toBeLessThan(1e-5);
        expect(Math.abs(r.zCos[0]! - zc)).toBeLessThan(1e-12);
      }
    }
  });

  it("the linear estimator is biased by +108.8 km/s at z = 0.04 with no peculiar velocity", () => {
    // Davis & Scrimgeour 2014 (abstract: ~100 km/s at z ~ 0.04); domain reference §5.1 computes +108.8 with D_C.
    const d = distancesFromColumn([comovingDistanceMpc(0.04, LCDM)], [1], "comoving");
    const v = peculiarVelocities([0.04], undefined, d, "linear", LCDM).vPecKmS[0]!;
    expect(Math.abs(v - 108.8)).toBeLessThan(0.06);
  });
});

describe("edges", () => {
  it("NaN redshift or distance gives NaN velocity and error", () => {
    const r = peculiarVelocities([NaN, 0.01], undefined, distancesFromModulus([35, NaN], [0.1, 0.1]), "exact", LCDM);
    for (const k of [0, 1]) {
      expect(Number.isNaN(r.vPecKmS[k]!)).toBe(true);
      expect(Number.isNaN(r.vPecErrKmS[k]!)).toBe(true);
    }
    expect(Number.isNaN(r.zCos[1]!)).toBe(true);
  });

  it("the logarithmic estimator needs a positive redshift; the others accept blueshifts", () => {
    const d = distancesFromColumn([1], [0.1]);
    expect(Number.isNaN(peculiarVelocities([-0.0005], undefined, d, "log", LCDM).vPecKmS[0]!)).toBe(true);
    expect(Number.isFinite(peculiarVelocities([-0.0005], undefined, d, "exact", LCDM).vPecKmS[0]!)).toBe(true);
  });

  it("empty input gives empty output", () => {
    expect(peculiarVelocities([], undefined, distancesFromModulus([]), "exact", LCDM).vPecKmS.length).toBe(0);
  });
});
