/**
 * The invented sample scenario: the Veltrona Redshift Survey, the Caldera Tully-Fisher catalogue
 * and the Sorrel fundamental-plane sample, all seen in one mock universe with a massive cluster
 * (the Amberwell cluster), a bulk flow and a few blunders. Seeded: the same seed gives the same
 * bytes. Run with `npm run samples` (writes into this folder) or import `generateSamples`.
 *
 * Everything here is invented: the programme, the catalogues, the cluster and every id.
 */
import { join } from "node:path";
import { randomLcg, randomNormal, randomUniform } from "d3-random";
import { makeMockUniverse } from "../src/flow/mock.js";
import { tableFromColumns, type ColumnData } from "../src/catalogue/columns.js";
import { csvFromTable, writeTable } from "../src/catalogue/io.js";
import { writeFileAtomic } from "../src/catalogue/atomic.js";
import { frameToHelio, galacticUnitVectors, solarMotion } from "../src/cosmology/restframes.js";
import { comovingDistanceMpc, redshiftAtDistance } from "../src/cosmology/distances.js";
import { C_KMS } from "../src/cosmology/constants.js";
import { convertPosition } from "../src/sky/frames.js";
import { formatDec, formatRa } from "../src/sky/sexagesimal.js";
import { ARCSEC, DEG, RAD } from "../src/sky/angles.js";
import { TRUTH_FORMAT, type Truth } from "../src/pipeline/truth.js";

export const SAMPLE_SEED = 20261201;

/** The scenario's injected numbers (the truth). */
export const SCENARIO = {
  h0: 73.0,
  omegaM: 0.3,
  /** Bulk flow amplitude (km/s) and direction (Galactic l, b in degrees). */
  bulkAmplitudeKmS: 310,
  bulkLDeg: 292,
  bulkBDeg: 16,
  /** The Amberwell cluster. */
  cluster: { name: "Amberwell cluster", raDeg: 196.4, decDeg: -12.6, distMpc: 62, nMembers: 450, sigmaKmS: 850, rCoreMpc: 1.2, infallKmS: 400, infallRefMpc: 5, infallSlope: 0.5, infallMaxMpc: 30 },
  /** Survey volume and selection: n(d) ~ d^2 exp(-(d / selectionScaleMpc)^2) out to rMaxMpc. */
  rMaxMpc: 200,
  selectionScaleMpc: 95,
  zoneOfAvoidanceDeg: 8,
  sigmaStarKmS: 250,
  czErrKmS: 25,
  /** Galaxies in the redshift survey, and extra ones seen only by the distance catalogues. */
  nSurvey: 20000,
  nOnlyInDistanceCatalogues: 40,
  /** Positional scatter per axis of each catalogue around the true position, arcsec. */
  posErrArcsec: { survey: 0.25, caldera: 0.7, sorrel: 0.6 },
  caldera: { n: 3000, distErrFrac: 0.2, maxDistMpc: 160, blunderFraction: 0.008, missingMu: 3, missingMuErr: 4 },
  sorrel: { n: 800, shared: 450, distErrFrac: 0.22, maxDistMpc: 160, zeroPointOffsetMag: 0.15, blunders: 5 },
  /** Survey rows without a measured redshift (kept, flagged downstream). */
  surveyWithoutCz: 3,
} as const;

export interface SampleFiles {
  redshifts: string;
  caldera: string;
  sorrel: string;
  truth: string;
}

export const SAMPLE_FILES: SampleFiles = {
  redshifts: "veltrona-redshifts.csv",
  caldera: "caldera-tf.vot",
  sorrel: "sorrel-fp.fits",
  truth: "truth.json",
};

function f64(name: string, values: Float64Array, meta: ColumnData["meta"], nulls?: Uint8Array): ColumnData {
  const c: ColumnData = { name, kind: "float64", values, meta: meta ?? {} };
  if (nulls) c.nulls = nulls;
  return c;
}

function round(x: number, digits: number): number {
  const s = 10 ** digits;
  return Math.round(x * s) / s;
}

/** A position moved by a Gaussian of sigma arcsec per axis (tangent plane), degrees in and out. */
function jitter(raDeg: number, decDeg: number, sigmaArcsec: number, g: () => number): [number, number] {
  const dDec = sigmaArcsec * g() * ARCSEC * RAD;
  const dRa = (sigmaArcsec * g() * ARCSEC * RAD) / Math.max(1e-6, Math.cos(decDeg * DEG));
  let ra = raDeg + dRa;
  ra = ((ra % 360) + 360) % 360;
  return [ra, Math.max(-90, Math.min(90, decDeg + dDec))];
}

/** Fisher-Yates with a seeded source. */
function shuffle(n: number, u: () => number): Int32Array {
  const p = Int32Array.from({ length: n }, (_, i) => i);
  for (let i = n - 1; i > 0; i--) {
    const j = Math.floor(u() * (i + 1));
    const t = p[i]!;
    p[i] = p[j]!;
    p[j] = t;
  }
  return p;
}

function pad(k: number, width: number): string {
  return String(k).padStart(width, "0");
}

export async function generateSamples(outDir: string, seed = SAMPLE_SEED): Promise<SampleFiles> {
  const S = SCENARIO;
  const bl = S.bulkLDeg * DEG;
  const bb = S.bulkBDeg * DEG;
  const bulk: [number, number, number] = [S.bulkAmplitudeKmS * Math.cos(bb) * Math.cos(bl), S.bulkAmplitudeKmS * Math.cos(bb) * Math.sin(bl), S.bulkAmplitudeKmS * Math.sin(bb)];
  const nAll = S.nSurvey + S.nOnlyInDistanceCatalogues;
  const c = S.cluster;
  const mock = makeMockUniverse({
    seed,
    n: nAll,
    h0: S.h0,
    omegaM: S.omegaM,
    rMaxMpc: S.rMaxMpc,
    selection: (d) => Math.exp(-((d / S.selectionScaleMpc) ** 2)),
    zoneOfAvoidanceDeg: S.zoneOfAvoidanceDeg,
    bulkFlowGal: bulk,
    clusters: [c],
    distErrFrac: S.caldera.distErrFrac,
    sigmaStar: S.sigmaStarKmS,
    czErrKmS: S.czErrKmS,
    blunderFraction: S.caldera.blunderFraction,
  });

  // Our own random streams for everything the mock does not do (order, ids, positions, the second catalogue).
  const src = randomLcg(seed + 1);
  const u = randomUniform.source(src)(0, 1);
  const g = randomNormal.source(src)(0, 1);

  // Mock rows in a random order, so cluster members are not all at the end.
  const order = shuffle(nAll, u);
  const inSurvey = new Uint8Array(nAll);
  for (let k = 0; k < S.nSurvey; k++) inSurvey[order[k]!] = 1;

  // --- The Veltrona Redshift Survey (CSV, sexagesimal, heliocentric cz) ---
  const zCmb = Float64Array.from(mock.czCmbKmS, (x) => x / C_KMS);
  const zHelio = frameToHelio(zCmb, galacticUnitVectors(mock.raDeg, mock.decDeg), solarMotion("cmb"), "exact");
  const surveyId = new Array<string>(nAll).fill("");
  const nS = S.nSurvey;
  const ids: string[] = new Array(nS);
  const raText: string[] = new Array(nS);
  const decText: string[] = new Array(nS);
  const cz = new Int32Array(nS);
  const czNull = new Uint8Array(nS);
  const czErr = new Int32Array(nS).fill(S.czErrKmS);
  const noCz = new Set<number>();
  while (noCz.size < S.surveyWithoutCz) noCz.add(Math.floor(u() * nS));
  for (let k = 0; k < nS; k++) {
    const i = order[k]!;
    ids[k] = `VRS-${pad(k + 1, 6)}`;
    surveyId[i] = ids[k]!;
    const [ra, dec] = jitter(mock.raDeg[i]!, mock.decDeg[i]!, S.posErrArcsec.survey, g);
    raText[k] = formatRa(ra, 3);
    decText[k] = formatDec(dec, 2);
    cz[k] = Math.round(C_KMS * zHelio[i]!);
    if (noCz.has(k)) czNull[k] = 1;
  }
  const survey = tableFromColumns([
    { name: "vrs_id", kind: "utf8", values: ids },
    { name: "ra_hms", kind: "utf8", values: raText, meta: { unit: "h", ucd: "pos.eq.ra;meta.main", description: "right ascension J2000, hours:minutes:seconds" } },
    { name: "dec_dms", kind: "utf8", values: decText, meta: { unit: "deg", ucd: "pos.eq.dec;meta.main", description: "declination J2000, degrees:arcminutes:arcseconds" } },
    { name: "cz_helio", kind: "int32", values: cz, nulls: czNull, meta: { unit: "km/s", ucd: "spect.dopplerVeloc.opt", description: "heliocentric c z" } },
    { name: "cz_err", kind: "int32", values: czErr, meta: { unit: "km/s", ucd: "stat.error", description: "error of cz_helio" } },
  ]);
  const csvHeader = [
    "# Veltrona Redshift Survey, first data release (invented sample data made by sample-catalogues/generate.ts)",
    "# positions J2000 sexagesimal; cz_helio = c z in the heliocentric frame; empty cz_helio = no redshift measured",
  ].join("\n");
  await writeFileAtomic(join(outDir, SAMPLE_FILES.redshifts), csvHeader + "\n" + csvFromTable(survey));

  // --- Distance catalogues: drawn from galaxies nearer than maxDistMpc ---
  const near = (maxD: number) => Array.from(order).filter((i) => mock.distTrueMpc[i]! < maxD);
  const caldPool = near(S.caldera.maxDistMpc);
  const onlyDist = Array.from(order).slice(nS).filter((i) => mock.distTrueMpc[i]! < S.caldera.maxDistMpc);
  const surveyNear = caldPool.filter((i) => inSurvey[i]);
  const caldRows = [...onlyDist, ...surveyNear.slice(0, S.caldera.n - onlyDist.length)];
  const caldOrder = shuffle(caldRows.length, u);
  const cald = Array.from(caldOrder, (k) => caldRows[k]!);

  const nC = cald.length;
  const cId: string[] = new Array(nC);
  const cRa = new Float64Array(nC);
  const cDec = new Float64Array(nC);
  const cMu = new Float64Array(nC);
  const cMuErr = new Float64Array(nC);
  const cMuNull = new Uint8Array(nC);
  const cMuErrNull = new Uint8Array(nC);
  const blunderIds: string[] = [];
  const calderaIdOf = new Map<number, string>();
  for (let k = 0; k < nC; k++) {
    const i = cald[k]!;
    cId[k] = `CTF-${pad(k + 1, 5)}`;
    calderaIdOf.set(i, cId[k]!);
    const [ra, dec] = jitter(mock.raDeg[i]!, mock.decDeg[i]!, S.posErrArcsec.caldera, g);
    cRa[k] = round(ra, 7);
    cDec[k] = round(dec, 7);
    cMu[k] = round(mock.mu[i]!, 3);
    cMuErr[k] = round(mock.muErr[i]!, 3);
    if (mock.isBlunder[i]) blunderIds.push(cId[k]!);
  }
  // A few missing values and a few bad rows (kept in the file; the loader must flag them).
  const pick = (count: number, avoid: Set<number>): number[] => {
    const out: number[] = [];
    while (out.length < count) {
      const k = Math.floor(u() * nC);
      if (avoid.has(k)) continue;
      avoid.add(k);
      out.push(k);
    }
    return out;
  };
  const touched = new Set<number>();
  for (const k of pick(S.caldera.missingMu, touched)) cMuNull[k] = 1;
  for (const k of pick(S.caldera.missingMuErr, touched)) cMuErrNull[k] = 1;
  const badRows = pick(3, touched);
  const badReasons: string[] = [];
  cDec[badRows[0]!] = 97.31;
  badReasons.push(`${cId[badRows[0]!]}: declination 97.31 deg (out of range)`);
  cRa[badRows[1]!] = -4.2;
  badReasons.push(`${cId[badRows[1]!]}: right ascension -4.2 deg (out of range)`);
  cMuErr[badRows[2]!] = -0.4;
  badReasons.push(`${cId[badRows[2]!]}: negative distance-modulus error -0.4 mag`);
  const calderaTable = tableFromColumns([
    { name: "ctf_id", kind: "utf8", values: cId, meta: { ucd: "meta.id;meta.main", description: "Caldera Tully-Fisher catalogue identifier" } },
    f64("raj2000", cRa, { unit: "deg", ucd: "pos.eq.ra;meta.main", description: "right ascension J2000" }),
    f64("dej2000", cDec, { unit: "deg", ucd: "pos.eq.dec;meta.main", description: "declination J2000" }),
    f64("dm", cMu, { unit: "mag", ucd: "phot.mag.distMod", description: "Tully-Fisher distance modulus" }, cMuNull),
    f64("e_dm", cMuErr, { unit: "mag", ucd: "stat.error;phot.mag.distMod", description: "error of dm" }, cMuErrNull),
  ]);
  await writeTable(calderaTable, join(outDir, SAMPLE_FILES.caldera));

  // --- The Sorrel sample (FITS): shares galaxies with Caldera, own errors, a zero-point offset ---
  const so = S.sorrel;
  const calderaSurvey = cald.filter((i) => inSurvey[i]);
  const shared = calderaSurvey.slice(0, so.shared);
  const inCald = new Set(cald);
  const others = caldPool.filter((i) => inSurvey[i] && !inCald.has(i) && mock.distTrueMpc[i]! < so.maxDistMpc);
  const sorRows = [...shared, ...others.slice(0, so.n - shared.length)];
  const sorOrder = shuffle(sorRows.length, u);
  const sor = Array.from(sorOrder, (k) => sorRows[k]!);
  const nF = sor.length;
  const fId: string[] = new Array(nF);
  const fRa = new Float64Array(nF);
  const fDec = new Float64Array(nF);
  const fMu = new Float64Array(nF);
  const fMuErr = new Float64Array(nF);
  const sigmaMu = (5 / Math.LN10) * so.distErrFrac;
  const cosmo = { h0: S.h0, omegaM: S.omegaM };
  const sorBlunders = new Set<number>();
  while (sorBlunders.size < so.blunders) sorBlunders.add(Math.floor(u() * nF));
  for (let k = 0; k < nF; k++) {
    const i = sor[k]!;
    fId[k] = `SFP-${pad(k + 1, 4)}`;
    const [ra, dec] = jitter(mock.raDeg[i]!, mock.decDeg[i]!, S.posErrArcsec.sorrel, g);
    fRa[k] = round(ra, 7);
    fDec[k] = round(dec, 7);
    const d = mock.distTrueMpc[i]!;
    const zCos = redshiftAtDistance(d, "comoving", cosmo);
    let m = 5 * Math.log10((1 + zCos) * d) + 25 + sigmaMu * g() + so.zeroPointOffsetMag;
    if (sorBlunders.has(k)) {
      m += (u() < 0.5 ? -1 : 1) * (0.8 + 1.7 * u());
      blunderIds.push(fId[k]!);
    }
    fMu[k] = round(m, 3);
    fMuErr[k] = round(sigmaMu, 3);
  }
  const sorrelTable = tableFromColumns([
    { name: "SFP_ID", kind: "utf8", values: fId, meta: { ucd: "meta.id;meta.main", description: "Sorrel sample identifier" } },
    f64("RA_DEG", fRa, { unit: "deg", ucd: "pos.eq.ra;meta.main", description: "right ascension J2000" }),
    f64("DEC_DEG", fDec, { unit: "deg", ucd: "pos.eq.dec;meta.main", description: "declination J2000" }),
    f64("DISTMOD", fMu, { unit: "mag", ucd: "phot.mag.distMod", description: "fundamental-plane distance modulus" }),
    f64("DISTMOD_ERR", fMuErr, { unit: "mag", ucd: "stat.error;phot.mag.distMod", description: "error of DISTMOD" }),
  ]);
  await writeTable(sorrelTable, join(outDir, SAMPLE_FILES.sorrel));

  // --- The truth ---
  const ct = mock.truth.clusters[0]!;
  const zc = redshiftAtDistance(c.distMpc, "comoving", cosmo);
  const czCluster = C_KMS * ((1 + zc) * (1 + ct.vPecCentreKmS / C_KMS) - 1);
  const [cl, cb] = convertPosition(c.raDeg, c.decDeg, "icrs", "galactic");
  let membersInSurvey = 0;
  let membersWithDistance = 0;
  let sv = 0;
  let svv = 0;
  let nm = 0;
  for (let i = 0; i < nAll; i++) {
    if (mock.clusterOf[i] !== 0) continue;
    sv += mock.vPecTrue[i]!;
    svv += mock.vPecTrue[i]! ** 2;
    nm++;
    if (inSurvey[i]) membersInSurvey++;
    if (calderaIdOf.has(i) || sor.includes(i)) membersWithDistance++;
  }
  let decNearZero = 0;
  for (let k = 0; k < nS; k++) if (decText[k]!.startsWith("-00")) decNearZero++;
  const truth: Truth = {
    truth: TRUTH_FORMAT,
    seed,
    scenario: "Veltrona Redshift Survey + Caldera Tully-Fisher + Sorrel fundamental plane (invented)",
    h0: S.h0,
    omegaM: S.omegaM,
    bulkFlow: { vx: round(bulk[0], 6), vy: round(bulk[1], 6), vz: round(bulk[2], 6), amplitude: S.bulkAmplitudeKmS, lDeg: S.bulkLDeg, bDeg: S.bulkBDeg },
    cluster: {
      name: c.name,
      raDeg: c.raDeg,
      decDeg: c.decDeg,
      lDeg: round(cl, 6),
      bDeg: round(cb, 6),
      distMpc: c.distMpc,
      czCmbKmS: round(czCluster, 3),
      sigmaKmS: round(Math.sqrt(svv / nm - (sv / nm) ** 2), 3),
      coreSigmaKmS: c.sigmaKmS,
      members: membersInSurvey,
      membersWithDistance,
      vPecCentreKmS: round(ct.vPecCentreKmS, 3),
      rCoreMpc: c.rCoreMpc,
      infall: { kmS: c.infallKmS, atMpc: c.infallRefMpc, slope: c.infallSlope, maxMpc: c.infallMaxMpc },
    },
    zeroPoints: [{ alias: "sorrel", relativeTo: "caldera", offsetMag: so.zeroPointOffsetMag }],
    blunders: { count: blunderIds.length, ids: blunderIds.sort() },
    catalogues: {
      redshifts: { file: SAMPLE_FILES.redshifts, rows: nS, withoutCz: S.surveyWithoutCz, decBetweenMinus1And0: decNearZero, posErrArcsec: S.posErrArcsec.survey, czErrKmS: S.czErrKmS },
      caldera: { file: SAMPLE_FILES.caldera, rows: nC, notInSurvey: onlyDist.length, distErrFrac: S.caldera.distErrFrac, muErrMag: round(mock.muErr[0]!, 3), missingMu: S.caldera.missingMu, missingMuErr: S.caldera.missingMuErr, badRows: badReasons, posErrArcsec: S.posErrArcsec.caldera },
      sorrel: { file: SAMPLE_FILES.sorrel, rows: nF, sharedWithCaldera: shared.length, distErrFrac: so.distErrFrac, muErrMag: round(sigmaMu, 3), posErrArcsec: S.posErrArcsec.sorrel },
    },
    sigmaStarKmS: S.sigmaStarKmS,
    comovingDistanceOfClusterCzMpc: round(comovingDistanceMpc(czCluster / C_KMS, cosmo), 4),
  };
  await writeFileAtomic(join(outDir, SAMPLE_FILES.truth), JSON.stringify(truth, null, 2) + "\n");
  return SAMPLE_FILES;
}
