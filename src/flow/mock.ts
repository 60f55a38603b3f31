/**
 * Mock universes: seeded synthetic catalogues with their truth beside them, for tests, benchmarks
 * and the invented sample catalogues. Browser-safe (no node: imports).
 *
 * Model (all velocities CMB frame, positions comoving):
 * - field galaxies uniform in volume between rMinMpc and rMaxMpc (true comoving distance), optionally
 *   thinned by a radial selection function and a Galactic zone of avoidance |b| < zoneOfAvoidanceDeg;
 * - cluster members around each cluster centre, an isotropic Gaussian of scale rCoreMpc;
 * - 3-D peculiar velocity = bulk flow + spherical infall onto every cluster, v_in(d) =
 *   infallKmS (d / infallRefMpc)^(-infallSlope) for rCoreMpc <= d <= infallMaxMpc, rising linearly
 *   from 0 inside the core, 0 beyond infallMaxMpc (power-law form as in Terry, Paturel & Ekholm 2002,
 *   A&A 393, 57, who fit slope 0.9 for Virgo); the radial part v_pec = V . n is kept;
 * - plus a radial Gaussian of sigmaStar (field, the non-linear "thermal" scatter) or of the cluster's
 *   sigmaKmS (members: the core velocity dispersion), and a redshift measurement error czErrKmS;
 * - observed redshift: exact composition 1 + z_obs = (1 + z_cos)(1 + v_pec/c) with z_cos from the
 *   comoving distance in flat LCDM (Davis & Scrimgeour 2014; domain reference section 5.1), or with
 *   `linear: true` the low-z toy cz = H0 D + v_pec and mu = 5 log10(D) + 25;
 * - observed distance modulus: mu_true + N(0, sigma_mu), sigma_mu = (5 / ln 10) distErrFrac, i.e. a
 *   log-normal distance error of fractional size distErrFrac (ln D_obs ~ N(ln D, distErrFrac^2));
 * - blunders: a fraction of rows whose mu is shifted by a uniform amount of 0.5-3 mag of random sign
 *   (muErr still reports the nominal error, as a real blunder would).
 */
import { randomLcg, randomNormal, randomUniform } from "d3-random";
import { C_KMS } from "../cosmology/constants.js";
import { comovingDistanceMpc, redshiftAtDistance, type Cosmology } from "../cosmology/distances.js";
import { rotation, rotate } from "../sky/frames.js";
import { unitVector, lonLatOf } from "../sky/vectors.js";
import { PeculiarError } from "../errors.js";

export interface MockClusterSpec {
  raDeg: number;
  decDeg: number;
  /** Comoving distance of the centre, Mpc. */
  distMpc: number;
  /** Number of members placed around the centre. */
  nMembers: number;
  /** Core line-of-sight velocity dispersion of the members, km/s. Default 500. */
  sigmaKmS?: number;
  /** Gaussian scale of the member positions, Mpc. Default 1. */
  rCoreMpc?: number;
  /** Infall speed toward the centre at infallRefMpc, km/s (positive = inward). Default 0. */
  infallKmS?: number;
  /** Distance from the centre at which the infall speed is infallKmS, Mpc. Default 10. */
  infallRefMpc?: number;
  /** Power-law slope of the infall: v_in ~ d^-slope. Default 0.9. */
  infallSlope?: number;
  /** No infall beyond this distance from the centre, Mpc. Default 4 * infallRefMpc. */
  infallMaxMpc?: number;
}

export interface MockOptions {
  seed: number;
  /** Total number of rows (field galaxies + all cluster members). */
  n: number;
  /** km/s/Mpc, default 70. */
  h0?: number;
  /** Default 0.3 (flat). */
  omegaM?: number;
  /** Low-z toy instead of the exact cosmological composition. Default false. */
  linear?: boolean;
  rMinMpc?: number;
  /** Default 150 Mpc. */
  rMaxMpc?: number;
  /** Probability in [0, 1] of keeping a field galaxy at true comoving distance d (rejection sampling). */
  selection?: (distMpc: number) => number;
  /** Field galaxies with |b| below this are not drawn. Default 0. */
  zoneOfAvoidanceDeg?: number;
  /** Bulk flow in Galactic Cartesian km/s (x to l=0, y to l=90, z to the NGP). Default [0,0,0]. */
  bulkFlowGal?: [number, number, number];
  clusters?: MockClusterSpec[];
  /** Fractional (log-normal) distance error. Default 0.2. */
  distErrFrac?: number;
  /** Radial thermal scatter of field galaxies, km/s. Default 250. */
  sigmaStar?: number;
  /** Redshift measurement error, km/s. Default 0. */
  czErrKmS?: number;
  /** Fraction of rows with a blundered distance modulus. Default 0. */
  blunderFraction?: number;
  /** Range of the blunder shift in magnitudes (random sign). Default [0.5, 3]. */
  blunderMagRange?: [number, number];
}

export interface MockClusterTruth extends Required<MockClusterSpec> {
  /** Radial peculiar velocity of the centre (bulk flow + infall onto the other clusters), km/s. */
  vPecCentreKmS: number;
}

export interface MockTruth {
  h0: number;
  omegaM: number;
  linear: boolean;
  bulkFlowGal: [number, number, number];
  clusters: MockClusterTruth[];
  blunderFraction: number;
  distErrFrac: number;
  sigmaStar: number;
  czErrKmS: number;
  seed: number;
}

export interface MockUniverse {
  n: number;
  raDeg: Float64Array;
  decDeg: Float64Array;
  /** True comoving distance, Mpc. */
  distTrueMpc: Float64Array;
  /** Observed CMB-frame redshift times c, km/s. */
  czCmbKmS: Float64Array;
  /** True radial peculiar velocity (including thermal scatter), km/s. */
  vPecTrue: Float64Array;
  /** Observed distance modulus (of the luminosity distance; of D itself when linear). */
  mu: Float64Array;
  /** Nominal error of mu, mag. */
  muErr: Float64Array;
  /** The czErrKmS of each row. */
  czErrKmS: Float64Array;
  isBlunder: Uint8Array;
  /** Index into truth.clusters, -1 for field galaxies. */
  clusterOf: Int32Array;
  truth: MockTruth;
}

const LN10_OVER_5 = Math.LN10 / 5;

function clusterDefaults(c: MockClusterSpec): Required<MockClusterSpec> {
  const infallRefMpc = c.infallRefMpc ?? 10;
  return {
    raDeg: c.raDeg,
    decDeg: c.decDeg,
    distMpc: c.distMpc,
    nMembers: c.nMembers,
    sigmaKmS: c.sigmaKmS ?? 500,
    rCoreMpc: c.rCoreMpc ?? 1,
    infallKmS: c.infallKmS ?? 0,
    infallRefMpc,
    infallSlope: c.infallSlope ?? 0.9,
    infallMaxMpc: c.infallMaxMpc ?? 4 * infallRefMpc,
  };
}

/** Infall speed (inward, km/s) at distance d (Mpc) from a cluster's centre. */
export function mockInfallSpeed(c: Required<MockClusterSpec>, dMpc: number): number {
  if (!(c.infallKmS !== 0) || dMpc > c.infallMaxMpc) return 0;
  const atCore = c.infallKmS * Math.pow(Math.max(c.rCoreMpc, 1e-9) / c.infallRefMpc, -c.infallSlope);
  if (dMpc < c.rCoreMpc) return (atCore * dMpc) / c.rCoreMpc;
  return c.infallKmS * Math.pow(dMpc / c.infallRefMpc, -c.infallSlope);
}

/** A seeded mock catalogue with its truth. Throws only for impossible options. */
export function makeMockUniverse(opts: MockOptions): MockUniverse {
  const h0 = opts.h0 ?? 70;
  const omegaM = opts.omegaM ?? 0.3;
  const linear = opts.linear ?? false;
  const rMin = opts.rMinMpc ?? 0;
  const rMax = opts.rMaxMpc ?? 150;
  const zoa = opts.zoneOfAvoidanceDeg ?? 0;
  const bulk = opts.bulkFlowGal ?? [0, 0, 0];
  const distErrFrac = opts.distErrFrac ?? 0.2;
  const sigmaStar = opts.sigmaStar ?? 250;
  const czErr = opts.czErrKmS ?? 0;
  const blunderFraction = opts.blunderFraction ?? 0;
  const [bLo, bHi] = opts.blunderMagRange ?? [0.5, 3];
  const clusters = (opts.clusters ?? []).map(clusterDefaults);
  const n = opts.n;
  if (!(Number.isInteger(n) && n >= 0)) throw new PeculiarError("range", "mock size n must be a whole number >= 0", { value: n });
  if (!(rMax > rMin && rMin >= 0)) throw new PeculiarError("range", "mock needs 0 <= rMinMpc < rMaxMpc", { value: [rMin, rMax] });
  if (!(distErrFrac >= 0)) throw new PeculiarError("range", "distErrFrac must be >= 0", { value: distErrFrac });
  if (!(blunderFraction >= 0 && blunderFraction <= 1)) throw new PeculiarError("range", "blunderFraction must be in [0, 1]", { value: blunderFraction });
  if (!(zoa >= 0 && zoa < 90)) throw new PeculiarError("range", "zoneOfAvoidanceDeg must be in [0, 90)", { value: zoa });
  const nMembers = clusters.reduce((s, c) => s + c.nMembers, 0);
  if (nMembers > n) throw new PeculiarError("range", "cluster members outnumber the mock size", { value: nMembers, expected: `<= n = ${n}` });

  const cosmo: Cosmology = { h0, omegaM };
  const src = randomLcg(opts.seed);
  const uni = randomUniform.source(src)(0, 1);
  const gauss = randomNormal.source(src)(0, 1);
  const galToIcrs = rotation("galactic", "icrs");
  const icrsToGal = rotation("icrs", "galactic");

  // Cluster centres in Galactic Cartesian.
  const cen = clusters.map((c) => {
    const [x, y, z] = rotate(icrsToGal, ...unitVector(c.raDeg, c.decDeg));
    return [x * c.distMpc, y * c.distMpc, z * c.distMpc] as [number, number, number];
  });

  const gx = new Float64Array(n);
  const gy = new Float64Array(n);
  const gz = new Float64Array(n);
  const clusterOf = new Int32Array(n).fill(-1);
  const sinZoa = Math.sin((zoa * Math.PI) / 180);
  const r3min = rMin ** 3;
  const r3max = rMax ** 3;
  const nField = n - nMembers;
  let guard = 0;
  for (let i = 0; i < nField; ) {
    if (++guard > 1000 * (nField + 10)) throw new PeculiarError("range", "mock selection keeps almost no galaxies");
    const r = Math.cbrt(r3min + (r3max - r3min) * uni());
    const zc = 2 * uni() - 1;
    if (Math.abs(zc) < sinZoa) continue;
    if (opts.selection && !(uni() < opts.selection(r))) continue;
    const phi = 2 * Math.PI * uni();
    const rho = Math.sqrt(Math.max(0, 1 - zc * zc));
    gx[i] = r * rho * Math.cos(phi);
    gy[i] = r * rho * Math.sin(phi);
    gz[i] = r * zc;
    i++;
  }
  let k = nField;
  clusters.forEach((c, ci) => {
    const [cx, cy, cz] = cen[ci]!;
    for (let m = 0; m < c.nMembers; m++, k++) {
      gx[k] = cx + c.rCoreMpc * gauss();
      gy[k] = cy + c.rCoreMpc * gauss();
      gz[k] = cz + c.rCoreMpc * gauss();
      clusterOf[k] = ci;
    }
  });

  // 3-D peculiar velocity field (bulk + infall), radial part.
  const flow3 = (x: number, y: number, z: number): [number, number, number] => {
    let vx = bulk[0];
    let vy = bulk[1];
    let vz = bulk[2];
    clusters.forEach((c, ci) => {
      const [cx, cy, cz] = cen[ci]!;
      const dx = x - cx;
      const dy = y - cy;
      const dz = z - cz;
      const d = Math.hypot(dx, dy, dz);
      if (d === 0) return;
      const v = mockInfallSpeed(c, d);
      vx -= (v * dx) / d;
      vy -= (v * dy) / d;
      vz -= (v * dz) / d;
    });
    return [vx, vy, vz];
  };

  const raDeg = new Float64Array(n);
  const decDeg = new Float64Array(n);
  const distTrue = new Float64Array(n);
  const cz = new Float64Array(n);
  const vPec = new Float64Array(n);
  const mu = new Float64Array(n);
  const muErr = new Float64Array(n);
  const czErrCol = new Float64Array(n).fill(czErr);
  const isBlunder = new Uint8Array(n);
  const sigmaMu = distErrFrac / LN10_OVER_5;
  for (let i = 0; i < n; i++) {
    const x = gx[i]!;
    const y = gy[i]!;
    const z = gz[i]!;
    const d = Math.hypot(x, y, z);
    const [ex, ey, ez] = d > 0 ? [x / d, y / d, z / d] : [1, 0, 0];
    const [vx, vy, vz] = flow3(x, y, z);
    const ci = clusterOf[i]!;
    const disp = ci >= 0 ? clusters[ci]!.sigmaKmS : sigmaStar;
    const v = vx * ex + vy * ey + vz * ez + disp * gauss();
    const [ix, iy, iz] = rotate(galToIcrs, ex, ey, ez);
    const [ra, dec] = lonLatOf(ix, iy, iz);
    raDeg[i] = ra;
    decDeg[i] = dec;
    distTrue[i] = d;
    vPec[i] = v;
    let muTrue: number;
    if (linear) {
      cz[i] = h0 * d + v + czErr * gauss();
      muTrue = 5 * Math.log10(d) + 25;
    } else {
      const zCos = redshiftAtDistance(d, "comoving", cosmo);
      cz[i] = C_KMS * ((1 + zCos) * (1 + v / C_KMS) - 1) + czErr * gauss();
      muTrue = 5 * Math.log10((1 + zCos) * d) + 25;
    }
    let m = muTrue + sigmaMu * gauss();
    if (blunderFraction > 0 && uni() < blunderFraction) {
      isBlunder[i] = 1;
      const shift = bLo + (bHi - bLo) * uni();
      m += uni() < 0.5 ? -shift : shift;
    }
    mu[i] = m;
    muErr[i] = sigmaMu;
  }

  const truthClusters: MockClusterTruth[] = clusters.map((c, ci) => {
    const [cx, cy, cz0] = cen[ci]!;
    const [vx, vy, vz] = flow3(cx, cy, cz0);
    return { ...c, vPecCentreKmS: (vx * cx + vy * cy + vz * cz0) / c.distMpc };
  });
  return {
    n,
    raDeg,
    decDeg,
    distTrueMpc: distTrue,
    czCmbKmS: cz,
    vPecTrue: vPec,
    mu,
    muErr,
    czErrKmS: czErrCol,
    isBlunder,
    clusterOf,
    truth: { h0, omegaM, linear, bulkFlowGal: [bulk[0], bulk[1], bulk[2]], clusters: truthClusters, blunderFraction, distErrFrac, sigmaStar, czErrKmS: czErr, seed: opts.seed },
  };
}

/** Comoving distance of the observed redshift for a mock's cosmology (the redshift-space distance). */
export function mockRedshiftDistanceMpc(czKmS: number, truth: Pick<MockTruth, "h0" | "omegaM" | "linear">): number {
  if (truth.linear) return czKmS / truth.h0;
  return comovingDistanceMpc(czKmS / C_KMS, { h0: truth.h0, omegaM: truth.omegaM });
}
