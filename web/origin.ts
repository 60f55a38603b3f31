/**
 * The origin the slices and the Hubble diagram are drawn from: here (us), a galaxy, or a group's
 * centroid. Re-centring runs in the browser with the library's own `recentre` (the same code as
 * `peculiar recentre`), on supergalactic Cartesian positions of the comoving distance and
 * line-of-sight velocities vr = H0 dist_c + v_pec (tangential velocities unknown, taken as zero).
 */
import type { ViewData } from "./data.js";
import { originOf, recentre, type RecentreOrigin } from "../src/flow/recentre.js";

export type OriginKind = "home" | "galaxy" | "group";

export interface OriginView {
  kind: OriginKind;
  /** The galaxy re-centred on (-1 unless kind = galaxy). */
  row: number;
  /** The group re-centred on (-1 unless kind = group). */
  groupId: number;
  label: string;
  /** Origin position, supergalactic Cartesian, Mpc. */
  ox: number;
  oy: number;
  oz: number;
  /** Positions relative to the origin, Mpc. */
  x: Float64Array;
  y: Float64Array;
  z: Float64Array;
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
  points: { x: Float64Array; y: Float64Array; z: Float64Array; vr: Float64Array; vrErr: Float64Array; use: Uint8Array };
  h0: number;
}

/** Rows usable as origins and as points of the fit: valid, finite position and velocity. */
export function originInputs(d: ViewData): OriginInputs {
  const use = new Uint8Array(d.n);
  for (let i = 0; i < d.n; i++) {
    const ok = d.valid[i] && !d.outlier[i] && Number.isFinite(d.col.sgx[i]! + d.col.sgy[i]! + d.col.sgz[i]! + d.vr[i]!);
    use[i] = ok ? 1 : 0;
  }
  return { points: { x: d.col.sgx, y: d.col.sgy, z: d.col.sgz, vr: d.vr, vrErr: d.col.v_pec_err, use }, h0: d.h0 };
}

/** Copies of the rows in `rows` (for re-centring the rows left out of the fit, e.g. outliers). */
function subset(p: OriginInputs["points"], rows: Int32Array) {
  const pick = (a: Float64Array) => {
    const o = new Float64Array(rows.length);
    for (let k = 0; k < rows.length; k++) o[k] = a[rows[k]!]!;
    return o;
  };
  return { x: pick(p.x), y: pick(p.y), z: pick(p.z), vr: pick(p.vr), vrErr: pick(p.vrErr) };
}

function build(inp: OriginInputs, origin: RecentreOrigin, kind: OriginKind, row: number, groupId: number, label: string): OriginView {
  const t0 = performance.now();
  const p = inp.points;
  const r = recentre(p, origin, { h0: inp.h0, fitDipole: true });
  // Rows left out of the fit (outliers, invalid rows) are still drawn: the same library call on them
  // alone, from the same origin given as a point, gives their distance and velocity seen from there.
  const o = originOf(p, origin);
  const left: number[] = [];
  for (let i = 0; i < p.x.length; i++) if (!p.use[i] && i !== o.index) left.push(i);
  if (left.length > 0 && Number.isFinite(o.x + o.y + o.z + o.vr)) {
    const rows = Int32Array.from(left);
    const q = recentre(subset(p, rows), { x: o.x, y: o.y, z: o.z, vr: o.vr }, { h0: inp.h0, fitDipole: false, fitH0: false });
    for (let k = 0; k < rows.length; k++) r.vAB[rows[k]!] = q.vAB[k]!;
  }
  const kernelMs = performance.now() - t0;
  const n = p.x.length;
  const ox = o.x;
  const oy = o.y;
  const oz = o.z;
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  const z = new Float64Array(n);
  const u = new Float64Array(n);
  const h = Number.isFinite(r.h0There) ? r.h0There : inp.h0;
  for (let i = 0; i < n; i++) {
    x[i] = p.x[i]! - ox;
    y[i] = p.y[i]! - oy;
    z[i] = p.z[i]! - oz;
    u[i] = r.vAB[i]! - h * r.s[i]!;
  }
  return {
    kind,
    row,
    groupId,
    label,
    ox,
    oy,
    oz,
    x,
    y,
    z,
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
  return build(inp, { x: 0, y: 0, z: 0, vr: 0 }, "home", -1, -1, "here");
}

export function galaxyView(inp: OriginInputs, row: number, id: string): OriginView {
  return build(inp, { index: row }, "galaxy", row, -1, `galaxy ${id}`);
}

/** A group's centroid: the mean position and mean line-of-sight velocity of its members. */
export function groupView(inp: OriginInputs, groupId: number, rows: Int32Array): OriginView {
  const p = inp.points;
  let x = 0;
  let y = 0;
  let z = 0;
  let vr = 0;
  let m = 0;
  for (const i of rows) {
    const s = p.x[i]! + p.y[i]! + p.z[i]! + p.vr[i]!;
    if (!Number.isFinite(s)) continue;
    x += p.x[i]!;
    y += p.y[i]!;
    z += p.z[i]!;
    vr += p.vr[i]!;
    m++;
  }
  if (m === 0) return build(inp, { x: NaN, y: NaN, z: NaN, vr: NaN }, "group", -1, groupId, `group ${groupId} (no usable members)`);
  // vr of the centroid: the mean line-of-sight velocity, taken along the centroid's direction.
  return build(inp, { x: x / m, y: y / m, z: z / m, vr: vr / m }, "group", -1, groupId, `group ${groupId} (${rows.length} members)`);
}
