// Test helper: a mock universe turned into the columns the velocities step writes.
import type { MockUniverse } from "../../src/flow/mock.js";
import type { FlowRows } from "../../src/flow/bulkflow.js";
import { convertPositions } from "../../src/sky/frames.js";
import { luminosityDistanceFromModulus, redshiftAtDistance } from "../../src/cosmology/distances.js";

/** Galactic l, b, the comoving distance of the observed modulus (at the mock's cosmology), f = sigma_D/D. */
export function flowRowsOf(m: MockUniverse): FlowRows {
  const { lonDeg, latDeg } = convertPositions(m.raDeg, m.decDeg, "icrs", "galactic");
  const n = m.n;
  const distCMpc = new Float64Array(n);
  const distFracErr = new Float64Array(n);
  const c = { h0: m.truth.h0, omegaM: m.truth.omegaM };
  for (let i = 0; i < n; i++) {
    const dl = luminosityDistanceFromModulus(m.mu[i]!);
    distCMpc[i] = m.truth.linear ? dl : dl / (1 + redshiftAtDistance(dl, "luminosity", c));
    distFracErr[i] = (Math.LN10 / 5) * m.muErr[i]!;
  }
  return { lDeg: lonDeg, bDeg: latDeg, distCMpc, distFracErr, czCmbKmS: m.czCmbKmS };
}

/** A CSV as 'peculiar velocities' would leave it: id, ra, dec, cz_cmb, dist_c_mpc, dist_c_err_mpc. */
export function mockCsv(m: MockUniverse): string {
  const r = flowRowsOf(m);
  const lines = ["id,ra,dec,cz_cmb,dist_c_mpc,dist_c_err_mpc"];
  for (let i = 0; i < m.n; i++) {
    lines.push([`G${String(i + 1).padStart(5, "0")}`, m.raDeg[i]!.toFixed(8), m.decDeg[i]!.toFixed(8), m.czCmbKmS[i]!.toFixed(4), r.distCMpc[i]!.toFixed(6), (r.distCMpc[i]! * r.distFracErr[i]!).toFixed(6)].join(","));
  }
  return lines.join("\n") + "\n";
}
