/**
 * The origin the slices and the Hubble diagram are drawn from: here (us), a galaxy, or a group's
 * centre. Re-centring runs in the browser with the library's own `recentre` on the inputs that
 * `peculiar recentre` builds (Galactic Cartesian comoving positions, line-of-sight velocities
 * vr = H0 D + v_pec, tangential velocities unknown, taken as zero); the slices show the result in
 * supergalactic Cartesian coordinates.
 */
import type { ViewData } from "./data.js";
import { originOf, recentre, type RecentreOrigin } from "../src/flow/recentre.js";
import type { RecentreThreads } from "../src/flow/recentre-kernels.js";
import { fitFlow, flowPoints, trustedDistances, type FlowRows } from "../src/flow/bulkflow.js";
import { groupTable } from "../src/flow/groups.js";
import { excludeMembers, groupOrigin } from "../src/flow/origins.js";
import { DEFAULT_COSMOLOGY, type Cosmology } from "../src/cosmology/distances.js";
import { convertPositions, rotate, rotation } from "../src/sky/frames.js";

export type OriginKind = "home" | "galaxy" | "group";

export interface OriginView {
  kind: OriginKind;
  /** The galaxy re-centred on (-1 unless kind = galaxy). */
  row: number;
  /** The group re-centred on (-1 unless kind = group). */
  groupId: number;
  label: string;
  /** Origin position, supergalactic Cartesian, Mpc (the fit itself runs in Galactic Cartesian). */
  ox: number;
  oy: number;
  oz: number;
  /** Positions relative to the origin, Mpc: sg - (ox, oy, oz) (made when first read). */
  readonly x: Float64Array;
  readonly y: Float64Array;
  readonly z: Float64Array;
  /** The catalogue's supergalactic positions about us (the same arrays for every origin), Mpc. */
  sg: { x: Float64Array; y: Float64Array; z: Float64Array };
  /** Distance from the origin (Mpc) and radial velocity seen from there (km/s). */
  s: Float64Array;
  v: Float64Array;
  /** Radial peculiar velocity seen from there: v - H s (km/s). */
  u: Float64Array;
  h0: number;
  h0Err: number;
  dipole: [number, number, number];
  dipoleErr: [number, number, number];
  nUsed: number;
  residualRms: number;
  /** Time the re-centring kernel took, ms. */
  kernelMs: number;
}

export interface OriginInputs {
  /** Galactic Cartesian positions (comoving Mpc) and line-of-sight velocities, as `peculiar recentre` builds them. */
  points: { x: Float64Array; y: Float64Array; z: Float64Array; vr: Float64Array; vrErr: Float64Array; use: Uint8Array };
  /** Supergalactic Cartesian positions for the slices, Mpc. */
  sg: { x: Float64Array; y: Float64Array; z: Float64Array };
  /** The flow rows the points were made from (for group origins). */
  rows: FlowRows;
  raDeg: Float64Array;
  decDeg: Float64Array;
  cosmology: Cosmology;
  /** Where H0 came from: the fit from here (as the CLI does by default). */
  h0Source: string;
  sigmaStar: number;
  /** Where re-centring's row loops run (fit-threads.ts); this thread when absent. */
  threads?: RecentreThreads;
}

/** Non-linear scatter added to every error in the fits, km/s: the default of `peculiar recentre`. */
export const SIGMA_STAR_KMS = 250;

/**
 * The re-centring inputs, built the way `peculiar recentre IN --on ID` builds them (src/cli/commands/
 * recentre.ts) so that the page and the CLI give the same numbers: flow rows from the column contract
 * (l, b, dist_c_mpc, dist_c_err_mpc / dist_c_mpc, cz_cmb; rows valid, not outliers, with a distance and
 * a redshift), H0 from the flow fit from here (fitFlow), points from flowPoints with that H0.
 * Rows without cz_cmb but with v_pec are placed with vr = H0 dist_c + v_pec and drawn, not fitted.
 */
export function originInputs(d: ViewData): OriginInputs {
  const n = d.n;
  const c = d.col;
  const frac = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const f = c.dist_c_err_mpc[i]! / c.dist_c_mpc[i]!;
    frac[i] = Number.isFinite(f) ? f : c.dist_err_mpc[i]! / c.dist_mpc[i]!;
  }
  const use = new Uint8Array(n);
  for (let i = 0; i < n; i++) use[i] = d.valid[i] && !d.outlier[i] && c.dist_c_mpc[i]! > 0 && Number.isFinite(c.cz_cmb[i]!) ? 1 : 0;
  const rows: FlowRows = { lDeg: c.l, bDeg: c.b, distCMpc: c.dist_c_mpc, distFracErr: frac, czCmbKmS: c.cz_cmb, use };
  const omegaM = DEFAULT_COSMOLOGY.omegaM;
  let h0 = DEFAULT_COSMOLOGY.h0;
  let h0Source = "default (no galaxy to fit)";
  let nFit = 0;
  for (let i = 0; i < n; i++) nFit += use[i]!;
  if (nFit > 4) {
    const f = fitFlow({ ...rows, use }, { cosmology: { h0: DEFAULT_COSMOLOGY.h0, omegaM }, sigmaStar: SIGMA_STAR_KMS });
    if (Number.isFinite(f.h0)) {
      h0 = f.h0;
      h0Source = "fit from here";
    }
  }
  const cosmology = { h0, omegaM };
  const pts = flowPoints(rows, cosmology);
  for (let i = 0; i < n; i++) {
    if (Number.isFinite(pts.vr[i]!)) continue;
    const v = h0 * c.dist_c_mpc[i]! + c.v_pec[i]!;
    if (Number.isFinite(v)) {
      pts.vr[i] = v;
      pts.vrErr[i] = c.v_pec_err[i]!;
    }
  }
  const icrs = convertPositions(c.l, c.b, "galactic", "icrs");
  return {
    points: { ...pts, use },
    sg: { x: c.sgx, y: c.sgy, z: c.sgz },
    rows,
    raDeg: icrs.lonDeg,
    decDeg: icrs.latDeg,
    cosmology,
    h0Source,
    sigmaStar: SIGMA_STAR_KMS,
  };
}

const GAL_TO_SG = rotation("galactic", "supergalactic");

/** Copies of the rows in `rows` (for re-centring the rows left out of the fit, e.g. outliers). */
function subset(p: { x: Float64Array; y: Float64Array; z: Float64Array; vr: Float64Array; vrErr: Float64Array }, rows: Int32Array) {
  const pick = (a: Float64Array) => {
    const o = new Float64Array(rows.length);
    for (let k = 0; k < rows.length; k++) o[k] = a[rows[k]!]!;
    return o;
  };
  return { x: pick(p.x), y: pick(p.y), z: pick(p.z), vr: pick(p.vr), vrErr: pick(p.vrErr) };
}

function build(inp: OriginInputs, origin: RecentreOrigin, use: Uint8Array, kind: OriginKind, row: number, groupId: number, label: string): OriginView {
  const t0 = performance.now();
  const p = { ...inp.points, use };
  const opts = { h0: inp.cosmology.h0, sigmaStar: inp.sigmaStar, form: "minor" as const, threads: inp.threads };
  const r = recentre(p, origin, opts);
  // Rows left out of the fit (outliers, invalid rows, a group's own members) are still drawn: the same
  // library call on them alone, from the same origin given as a point, gives their velocity seen from there.
  const o = originOf(p, origin);
  const left: number[] = [];
  for (let i = 0; i < p.x.length; i++) if (!use[i] && i !== o.index && Number.isFinite(p.vr[i]!)) left.push(i);
  if (left.length > 0 && Number.isFinite(o.x + o.y + o.z + o.vr)) {
    const rows = Int32Array.from(left);
    const q = recentre(subset(p, rows), { x: o.x, y: o.y, z: o.z, vr: o.vr }, { ...opts, fitDipole: false, fitH0: false });
    for (let k = 0; k < rows.length; k++) r.vAB[rows[k]!] = q.vAB[k]!;
  }
  const kernelMs = performance.now() - t0;
  const n = p.x.length;
  const [ox, oy, oz] = rotate(GAL_TO_SG, o.x, o.y, o.z);
  const u = new Float64Array(n);
  const h = Number.isFinite(r.h0There) ? r.h0There : inp.cosmology.h0;
  for (let i = 0; i < n; i++) u[i] = r.vAB[i]! - h * r.s[i]!;
  // positions about the origin, made when first read (the slices and the plot limits use sg - origin as they go)
  const sg = inp.sg;
  const rel = (c: Float64Array, oc: number) => {
    let a: Float64Array | null = null;
    return () => {
      if (a) return a;
      a = new Float64Array(n);
      for (let i = 0; i < n; i++) a[i] = c[i]! - oc;
      return a;
    };
  };
  const [x, y, z] = [rel(sg.x, ox), rel(sg.y, oy), rel(sg.z, oz)];
  return {
    kind,
    row,
    groupId,
    label,
    ox,
    oy,
    oz,
    get x() {
      return x();
    },
    get y() {
      return y();
    },
    get z() {
      return z();
    },
    sg,
    s: r.s,
    v: r.vAB,
    u,
    h0: r.h0There,
    h0Err: r.h0ThereErr,
    dipole: r.dipole,
    dipoleErr: r.dipoleErr,
    nUsed: r.nUsed,
    residualRms: r.residualRmsThere,
    kernelMs,
  };
}

/** The view from here: the same fit with the origin at (0, 0, 0) and at rest. */
export function homeView(inp: OriginInputs): OriginView {
  return build(inp, { x: 0, y: 0, z: 0, vr: 0 }, inp.points.use, "home", -1, -1, "here");
}

/** Rows of the small catalogue part warmWhileIdle re-centres on (odd, so that no loop tail goes unrun). */
const WARM_ROWS = 2001;

/**
 * Re-centres a small part of the catalogue from a few of its galaxies and throws the result away, so
 * that V8 has compiled the kernel's loops before the first click (the first re-centring of a page
 * otherwise takes 2-3 times as long as the later ones). With a fit worker, also re-centres the whole
 * catalogue with all but WARM_ROWS of its rows left out of the fit, so that the shared path (its call
 * sites and shared arrays) is compiled too at the cost of a setup pass. Changes nothing that is shown.
 */
export function warmRecentre(inp: OriginInputs): void {
  const n = inp.points.x.length;
  if (n < 50) return;
  const rows = new Int32Array(Math.min(n, WARM_ROWS));
  const step = n / rows.length;
  for (let k = 0; k < rows.length; k++) rows[k] = Math.floor(k * step);
  const p = { ...subset(inp.points, rows), use: Uint8Array.from(rows, (i) => inp.points.use[i]!) };
  const opts = { h0: inp.cosmology.h0, sigmaStar: inp.sigmaStar, form: "minor" as const, threads: inp.threads };
  for (const k of [1, rows.length >> 1, rows.length - 2]) recentre(p, { index: k }, opts);
  if (!inp.threads) return;
  const sparse = new Uint8Array(n);
  for (const i of rows) sparse[i] = inp.points.use[i]!;
  for (const k of [1, rows.length >> 1, rows.length - 2]) recentre({ ...inp.points, use: sparse }, { index: rows[k]! }, opts);
}

export function galaxyView(inp: OriginInputs, row: number, id: string): OriginView {
  return build(inp, { index: row }, inp.points.use, "galaxy", row, -1, `galaxy ${id}`);
}

/**
 * A group as the origin, as `peculiar recentre --on group:ID` resolves it: the group table's
 * centre (mean direction, error-weighted comoving distance and peculiar velocity; mean cz when no
 * member has a distance), vr = H0 D + v_pec; the members are part of the origin and leave the fit.
 */
export function groupView(inp: OriginInputs, groupIds: Int32Array, groupId: number): OriginView {
  let nG = 0;
  for (const g of groupIds) if (g > nG) nG = g;
  const gt = groupTable(
    { groupId: groupIds, nGroups: nG, raDeg: inp.raDeg, decDeg: inp.decDeg, czKmS: inp.rows.czCmbKmS, distCMpc: trustedDistances(inp.rows), distFracErr: inp.rows.distFracErr },
    inp.cosmology,
  );
  const k = groupId - 1;
  const label = `group ${groupId}`;
  if (!(k >= 0 && k < nG) || gt.nMembers[k] === 0) return build(inp, { x: NaN, y: NaN, z: NaN, vr: NaN }, inp.points.use, "group", -1, groupId, `${label} (no members)`);
  const o = groupOrigin(gt, k, inp.cosmology);
  const use = new Uint8Array(inp.points.use);
  excludeMembers(gt, k, use);
  return build(inp, { x: o.x, y: o.y, z: o.z, vr: o.vr }, use, "group", -1, groupId, `${label} (${gt.nMembers[k]} members)`);
}
