/**
 * Velocities kernels: the distance -> z_cos solve (bracketed Newton, one quadrature per step)
 * against a plain bisection baseline run side by side, the full peculiarVelocities kernel (value,
 * error and both bounds: three solves a row), and the frame conversion.
 * Seeded data (randomLcg), one warm-up, median of 5 runs, a sink against dead-code elimination.
 *   npm run bench velocities
 */
import { randomLcg, randomUniform } from "d3-random";
import { luminosityDistanceMpc, redshiftAtDistance } from "../src/cosmology/distances.js";
import { distancesFromModulus } from "../src/cosmology/distance-indicators.js";
import { peculiarVelocities } from "../src/cosmology/estimators.js";
import { galacticUnitVectors, helioToFrame, solarMotion } from "../src/cosmology/restframes.js";

const LCDM = { h0: 70, omegaM: 0.3 };
let sink = 0;

function median(xs: number[]): number {
  const s = [...xs].sort((a, b) => a - b);
  return s[s.length >> 1]!;
}

function time(fn: () => void, runs = 5): number {
  fn();
  const t: number[] = [];
  for (let r = 0; r < runs; r++) {
    const t0 = performance.now();
    fn();
    t.push(performance.now() - t0);
  }
  return median(t);
}

/** Baseline: bisection on D_L(z) = d over [0, 20] to 1e-13 in z. */
function bisect(d: number): number {
  let lo = 0;
  let hi = 20;
  while (hi - lo > 1e-13) {
    const mid = 0.5 * (lo + hi);
    if (luminosityDistanceMpc(mid, LCDM) < d) lo = mid;
    else hi = mid;
  }
  return 0.5 * (lo + hi);
}

console.log(`node ${process.version}`);
console.log("rows      solve (ms)  bisection (ms)  ratio   peculiarVelocities (ms)  helioToFrame (ms)");
for (const n of [1000, 10000, 100000]) {
  const src = randomLcg(12345);
  const u = randomUniform.source(src)(0, 1);
  const mu = new Float64Array(n);
  const err = new Float64Array(n).fill(0.4);
  const z = new Float64Array(n);
  const ra = new Float64Array(n);
  const dec = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    mu[i] = 30 + 8 * u(); // 10 Mpc to 400 Mpc
    z[i] = (Math.pow(10, (mu[i]! - 25) / 5) * 70) / 299792.458;
    ra[i] = 360 * u();
    dec[i] = (Math.asin(2 * u() - 1) * 180) / Math.PI;
  }
  const d = distancesFromModulus(mu, err);
  const tSolve = time(() => {
    for (let i = 0; i < n; i++) sink += redshiftAtDistance(d.distMpc[i]!, "luminosity", LCDM);
  });
  const baseRows = Math.min(n, 10000);
  const tBase = (time(() => {
    for (let i = 0; i < baseRows; i++) sink += bisect(d.distMpc[i]!);
  }, 3) * n) / baseRows;
  const tPv = time(() => {
    sink += peculiarVelocities(z, undefined, d, "exact", LCDM).vPecKmS[0]!;
  });
  const nGal = galacticUnitVectors(ra, dec);
  const sun = solarMotion("cmb");
  const tFrame = time(() => {
    sink += helioToFrame(z, nGal, sun)[0]!;
  });
  console.log(
    `${String(n).padEnd(9)} ${tSolve.toFixed(1).padStart(10)}  ${tBase.toFixed(1).padStart(14)}${n > baseRows ? "*" : " "} ${(tBase / tSolve).toFixed(1).padStart(5)}x  ${tPv.toFixed(1).padStart(23)}  ${tFrame.toFixed(2).padStart(17)}`,
  );
}
console.log("* bisection timed on 10 000 rows and scaled");
if (sink === 42) console.log("");
