import { describe, expect, it } from "vitest";
import {
  distancesFromColumn,
  distancesFromEta,
  distancesFromModulus,
  etaOfComovingDistance,
  modulusOfLuminosityDistance,
} from "../../src/cosmology/distance-indicators.js";
import { C_KMS } from "../../src/cosmology/constants.js";
import { comovingDistanceMpc } from "../../src/cosmology/distances.js";

const REL_TOL = 1e-12;
const rel = (a: number, b: number) => Math.abs(a / b - 1);
const LCDM = { h0: 70, omegaM: 0.3 };

describe("distances from a distance modulus", () => {
  it("mu = 35 is a luminosity distance of 100 Mpc", () => {
    // mu = 5 log10(D_L/Mpc) + 25 (Hogg 1999 eq. 25).
    const d = distancesFromModulus([35, 25, 40], [0.1, 0, 0.2]);
    expect(d.kind).toBe("luminosity");
    expect(rel(d.distMpc[0]!, 100)).toBeLessThan(REL_TOL);
    expect(rel(d.distMpc[1]!, 1)).toBeLessThan(REL_TOL);
    expect(rel(d.distMpc[2]!, 1000)).toBeLessThan(REL_TOL);
  });

  it("sigma_mu = 0.4 mag is an 18.4 % first-order error with bounds -16.8 % / +20.2 %", () => {
    // sigma_D/D = (ln 10/5) sigma_mu = 0.4605 sigma_mu (domain reference §5.5); the bounds are
    // 10^(-+0.4/5) - 1 = -16.82 % / +20.23 % (computed from the definition of mu).
    const d = distancesFromModulus([35], [0.4]);
    expect(Math.abs(d.distErrMpc[0]! / 100 - (Math.LN10 / 5) * 0.4)).toBeLessThan(1e-12);
    expect(Math.abs(d.distErrMpc[0]! - 18.42)).toBeLessThan(0.005);
    expect(Math.abs(d.distLoMpc[0]! - 100 * Math.pow(10, -0.08))).toBeLessThan(1e-10);
    expect(Math.abs(d.distHiMpc[0]! - 100 * Math.pow(10, 0.08))).toBeLessThan(1e-10);
    expect(Math.abs(d.distLoMpc[0]! - 83.18)).toBeLessThan(0.005);
    expect(Math.abs(d.distHiMpc[0]! - 120.23)).toBeLessThan(0.005);
  });

  it("a missing or negative error leaves the distance and gives NaN errors", () => {
    const d = distancesFromModulus([35, 35], [NaN, -0.1]);
    expect(d.distMpc[0]).toBeCloseTo(100, 12);
    for (const k of [0, 1]) {
      expect(Number.isNaN(d.distErrMpc[k]!)).toBe(true);
      expect(Number.isNaN(d.distLoMpc[k]!)).toBe(true);
    }
    const noErr = distancesFromModulus([35]);
    expect(Number.isNaN(noErr.distErrMpc[0]!)).toBe(true);
  });

  it("mu -> D_L -> mu round trips", () => {
    const mu = [20.5, 33.17532, 35, 47.02611];
    const back = modulusOfLuminosityDistance(distancesFromModulus(mu).distMpc);
    mu.forEach((m, i) => expect(Math.abs(back[i]! - m)).toBeLessThan(1e-12));
  });
});

describe("distances from a distance column", () => {
  it("keeps the value and its kind, with symmetric bounds", () => {
    const d = distancesFromColumn([50, 10], [5, 20], "comoving");
    expect(d.kind).toBe("comoving");
    expect(d.distMpc[0]).toBe(50);
    expect(d.distLoMpc[0]).toBe(45);
    expect(d.distHiMpc[0]).toBe(55);
    // A lower bound at or below zero has no meaning: NaN.
    expect(Number.isNaN(d.distLoMpc[1]!)).toBe(true);
    expect(distancesFromColumn([1]).kind).toBe("luminosity");
  });

  it("zero, negative and NaN distances are NaN", () => {
    const d = distancesFromColumn([0, -3, NaN], [1, 1, 1]);
    for (const k of [0, 1, 2]) expect(Number.isNaN(d.distMpc[k]!)).toBe(true);
  });
});

describe("distances from a log-distance ratio", () => {
  it("eta = 0.0075533 at cz = 7000 km/s is the comoving distance of mu = 35", () => {
    // Domain reference §5.3 (eta = log10(D_C(z_obs)/D_true), Springob et al. 2014): the mu = 35 galaxy at
    // cz_CMB = 7000 km/s has eta = 0.0075533 and D_C = 97.75699 Mpc (domain reference §6, H0 = 70, Om = 0.3).
    const z = [7000 / C_KMS];
    const d = distancesFromEta([0.0075533], [0.11], z, LCDM);
    expect(d.kind).toBe("comoving");
    expect(Math.abs(d.distMpc[0]! - 97.75699)).toBeLessThan(2e-4);
    expect(Math.abs(etaOfComovingDistance([97.75699], z, LCDM)[0]! - 0.0075533)).toBeLessThan(5e-8);
  });

  it("sigma_eta = 0.11 dex is a 25 % first-order error with bounds 10^(-+0.11)", () => {
    // sigma_D/D = ln(10) sigma_eta (domain reference §5.5: 0.11 dex ~ 26 %, Springob et al. 2014).
    const z = [0.03];
    const d = distancesFromEta([0], [0.11], z, LCDM);
    const dz = comovingDistanceMpc(0.03, LCDM);
    expect(rel(d.distMpc[0]!, dz)).toBeLessThan(REL_TOL);
    expect(rel(d.distErrMpc[0]!, dz * Math.LN10 * 0.11)).toBeLessThan(REL_TOL);
    expect(rel(d.distLoMpc[0]!, dz * Math.pow(10, -0.11))).toBeLessThan(REL_TOL);
    expect(rel(d.distHiMpc[0]!, dz * Math.pow(10, 0.11))).toBeLessThan(REL_TOL);
  });

  it("eta -> distance -> eta round trips and needs a positive redshift", () => {
    const z = [0.01, 0.05, 0.1];
    const eta = [-0.05, 0.02, 0.1];
    const back = etaOfComovingDistance(distancesFromEta(eta, undefined, z, LCDM).distMpc, z, LCDM);
    eta.forEach((e, i) => expect(Math.abs(back[i]! - e)).toBeLessThan(1e-12));
    expect(Number.isNaN(distancesFromEta([0], [0.1], [-0.001], LCDM).distMpc[0]!)).toBe(true);
  });

  it("empty input gives empty columns", () => {
    expect(distancesFromEta([], undefined, [], LCDM).distMpc.length).toBe(0);
    expect(distancesFromModulus([]).distMpc.length).toBe(0);
  });
});
