/**
 * A seeded test catalogue in the view's column contract (DEVELOPERS.md), made from the flow engine's
 * mock universe and the library's own frames and distance estimators: invented galaxies with made-up
 * ids, never real data. Outlier and group columns are filled from the mock's truth (blunders and
 * cluster members) so the marks can be drawn; they are inputs to the view, not results checked here.
 */
import { tableToIPC, type Table } from "apache-arrow";
import { writeFileSync } from "node:fs";
import { makeMockUniverse } from "../../src/flow/mock.js";
import { convertPositions } from "../../src/sky/frames.js";
import { unitVectors } from "../../src/sky/vectors.js";
import { C_KMS } from "../../src/cosmology/constants.js";
import { distancesFromModulus } from "../../src/cosmology/distance-indicators.js";
import { peculiarVelocities } from "../../src/cosmology/estimators.js";
import { tableFromColumns, type ColumnData } from "../../src/catalogue/columns.js";
import { META } from "../../src/catalogue/meta.js";

export interface ViewCatalogueOptions {
  seed: number;
  n: number;
  h0?: number;
  /** Leave these columns out (to test a partial catalogue). */
  drop?: string[];
}

export function makeViewCatalogue(o: ViewCatalogueOptions): Table {
  const h0 = o.h0 ?? 70;
  const cosmo = { h0, omegaM: 0.3 };
  const nCluster = Math.max(3, Math.round(o.n * 0.04));
  const m = makeMockUniverse({
    seed: o.seed,
    n: o.n,
    h0,
    rMaxMpc: 140,
    rMinMpc: 5,
    bulkFlowGal: [-150, -250, 80],
    distErrFrac: 0.15,
    blunderFraction: 0.01,
    clusters: [{ raDeg: 195, decDeg: 25, distMpc: 70, nMembers: nCluster, sigmaKmS: 600, rCoreMpc: 1.5, infallKmS: 300 }],
  });
  const n = m.n;
  const gal = convertPositions(m.raDeg, m.decDeg, "icrs", "galactic");
  const sg = convertPositions(m.raDeg, m.decDeg, "icrs", "supergalactic");
  const muErr = m.muErr;
  const dist = distancesFromModulus(m.mu, muErr);
  const zObs = Float64Array.from(m.czCmbKmS, (cz) => cz / C_KMS);
  const pv = peculiarVelocities(zObs, undefined, dist, "exact", cosmo);
  const u = unitVectors(sg.lonDeg, sg.latDeg);
  const sgx = new Float64Array(n);
  const sgy = new Float64Array(n);
  const sgz = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    sgx[i] = pv.distCMpc[i]! * u[3 * i]!;
    sgy[i] = pv.distCMpc[i]! * u[3 * i + 1]!;
    sgz[i] = pv.distCMpc[i]! * u[3 * i + 2]!;
  }
  // Group ids as 'peculiar groups' writes them: 1..N, -1 for none.
  const groupId = Int32Array.from(m.clusterOf, (c) => (c >= 0 ? c + 1 : -1));
  const groupSize = Int32Array.from(m.clusterOf, (c) => (c >= 0 ? nCluster : 0));
  const f = (name: string, values: Float64Array, unit?: string): ColumnData => ({ name, kind: "float64", values, ...(unit ? { meta: { unit } } : {}) });
  let cols: ColumnData[] = [
    { name: "id", kind: "utf8", values: Array.from({ length: n }, (_, i) => `TG${String(i + 1).padStart(6, "0")}`) },
    f("ra", Float64Array.from(m.raDeg), "deg"),
    f("dec", Float64Array.from(m.decDeg), "deg"),
    f("l", gal.lonDeg, "deg"),
    f("b", gal.latDeg, "deg"),
    f("sgl", sg.lonDeg, "deg"),
    f("sgb", sg.latDeg, "deg"),
    f("sgx", sgx, "Mpc"),
    f("sgy", sgy, "Mpc"),
    f("sgz", sgz, "Mpc"),
    f("dist_mpc", dist.distMpc, "Mpc"),
    f("dist_err_mpc", dist.distErrMpc, "Mpc"),
    f("dist_c_mpc", pv.distCMpc, "Mpc"),
    f("dist_c_err_mpc", pv.distCErrMpc, "Mpc"),
    f("cz_cmb", Float64Array.from(m.czCmbKmS), "km/s"),
    f("v_pec", pv.vPecKmS, "km/s"),
    f("v_pec_err", pv.vPecErrKmS, "km/s"),
    { name: "outlier", kind: "bool", values: Uint8Array.from(m.isBlunder) },
    { name: "group_id", kind: "int32", values: groupId },
    { name: "group_size", kind: "int32", values: groupSize },
    { name: "valid", kind: "bool", values: new Uint8Array(n).fill(1) },
    { name: "invalid_reason", kind: "utf8", values: new Array<string>(n).fill("") },
    { name: "source_row", kind: "int32", values: Int32Array.from({ length: n }, (_, i) => i + 1) },
  ];
  if (o.drop) cols = cols.filter((c) => !o.drop!.includes(c.name));
  const meta = new Map<string, string>([
    [META.roles, JSON.stringify({ id: "id", ra: "ra", dec: "dec" })],
    [META.settings, JSON.stringify({ step: "test-catalogue", h0, omegaM: 0.3, frame: "cmb", estimator: "exact" })],
  ]);
  return tableFromColumns(cols, meta, n);
}

export function writeViewCatalogue(path: string, o: ViewCatalogueOptions): Table {
  const t = makeViewCatalogue(o);
  writeFileSync(path, tableToIPC(t, "file"));
  return t;
}
