/**
 * What the run takes from the state at the end: the recovered numbers beside the truth, and the
 * plots (SVG files in the output folder).
 */
import { join } from "node:path";
import type { Table } from "apache-arrow";
import { writeFileAtomic } from "../catalogue/atomic.js";
import { float64Column, hasColumn } from "../catalogue/columns.js";
import { compare, type Comparison } from "./truth.js";
import { hubbleDiagramSvg, separationHistogramSvg, skyMapSvg, type SkyMarker } from "./plots.js";
import type { PipelineState } from "./state.js";
import { convertPosition } from "../sky/frames.js";

/** The recovered numbers beside the truth, for everything the run got to. */
export function comparisonsOf(s: PipelineState): Comparison[] {
  const t = s.truth;
  if (!t) return [];
  const out: Comparison[] = [];
  for (const z of t.zeroPoints) {
    const o = s.offsets.find((x) => x.alias === z.alias);
    if (o) out.push(compare(`zero_point.${z.alias}`, `zero-point offset of ${z.alias} against ${z.relativeTo}`, "mag", o.offsetMag, o.errMag, z.offsetMag));
  }
  if (s.flow) {
    const f = s.flow;
    out.push(compare("h0", "H0", "km/s/Mpc", f.h0.value, f.h0.error, t.h0));
    const comps = ["vx", "vy", "vz"] as const;
    comps.forEach((k, i) => out.push(compare(`bulk_flow.${k}`, `bulk flow ${k}, Galactic`, "km/s", f.bulk[k], Math.sqrt(f.bulk.cov[4 * i]!), t.bulkFlow[k])));
    out.push(compare("bulk_flow.amplitude", "bulk flow amplitude", "km/s", f.bulk.amplitude, f.bulk.amplitudeErr, t.bulkFlow.amplitude));
  }
  if (s.cluster) {
    const c = s.cluster;
    out.push(compare("cluster.d_ra", `${t.cluster.name}: centre offset along RA (times cos Dec)`, "deg", c.dRaCosDecDeg, c.posErrDeg, 0));
    out.push(compare("cluster.d_dec", `${t.cluster.name}: centre offset along Dec`, "deg", c.dDecDeg, c.posErrDeg, 0));
    out.push(compare("cluster.cz", `${t.cluster.name}: mean cz (CMB)`, "km/s", c.czKmS, c.czErrKmS, t.cluster.czCmbKmS));
    out.push(compare("cluster.distance", `${t.cluster.name}: distance (comoving)`, "Mpc", c.distCMpc, c.distCErrMpc, t.cluster.distMpc));
    out.push(compare("cluster.sigma", `${t.cluster.name}: velocity dispersion`, "km/s", c.sigmaKmS, c.sigmaErrKmS, t.cluster.sigmaKmS));
  }
  return out;
}

function col(t: Table | undefined, name: string): Float64Array | undefined {
  return t && hasColumn(t, name) ? float64Column(t, name) : undefined;
}

/** Writes the SVG plots the state allows and returns them with captions. */
export async function plotsOf(s: PipelineState, outDir: string): Promise<{ file: string; caption: string }[]> {
  const plots: { file: string; caption: string }[] = [];
  const put = async (file: string, svg: string, caption: string) => {
    await writeFileAtomic(join(outDir, file), svg);
    plots.push({ file, caption });
  };
  for (const m of s.matches) {
    const p: Parameters<typeof separationHistogramSvg>[0] = { sepArcsec: m.sepArcsec, radiusArcsec: m.radiusArcsec, title: `Separations, ${m.alias}` };
    if (m.expectedChance !== undefined) p.expectedChance = m.expectedChance;
    await put(`plot-separations-${m.alias}.svg`, separationHistogramSvg(p), `Separations of the matched pairs with ${m.alias}, with the expected chance pairs`);
  }
  const t = s.finalTable ?? s.velocities?.table;
  const vpec = col(t, "v_pec");
  if (t && vpec) {
    const frame = s.frame ?? "cmb";
    const d = col(t, "dist_c_mpc") ?? col(t, "dist_mpc");
    const v = col(t, `cz_${frame}`);
    const outlier = col(t, "outlier");
    if (d && v) {
      const h0 = s.flow?.h0.value;
      // Residuals from the fitted law when there is one (what the eye compares with the line), else v_pec.
      const resid = h0 === undefined ? vpec : Float64Array.from(v, (vi, i) => vi - h0 * d[i]!);
      const p: Parameters<typeof hubbleDiagramSvg>[0] = { distMpc: d, velKmS: v, vPecKmS: resid, h0: h0 ?? NaN, title: `Hubble diagram (${frame} frame)` };
      if (h0 !== undefined) p.residualLabel = "v - H0 D (km/s)";
      const e = col(t, "v_pec_err");
      if (e) p.vPecErrKmS = e;
      if (outlier) p.outlier = outlier;
      if (s.truth) p.h0Truth = s.truth.h0;
      await put("plot-hubble.svg", hubbleDiagramSvg(p), "Hubble diagram: cz (CMB frame) against the measured comoving distance with the fitted law; residuals from it below");
    }
    const l = col(t, "l");
    const b = col(t, "b");
    if (l && b) {
      const markers: SkyMarker[] = [];
      if (s.flow) markers.push({ lDeg: s.flow.bulk.lDeg, bDeg: s.flow.bulk.bDeg, label: "bulk flow (fit)", kind: "fit" });
      if (s.cluster) {
        const [gl, gb] = convertPosition(s.cluster.raDeg, s.cluster.decDeg, "icrs", "galactic");
        markers.push({ lDeg: gl, bDeg: gb, label: `richest group (${s.cluster.members})`, kind: "fit" });
      }
      if (s.truth) {
        markers.push({ lDeg: s.truth.bulkFlow.lDeg, bDeg: s.truth.bulkFlow.bDeg, label: "bulk flow (injected)", kind: "truth" });
        markers.push({ lDeg: s.truth.cluster.lDeg, bDeg: s.truth.cluster.bDeg, label: s.truth.cluster.name, kind: "truth" });
      }
      const p: Parameters<typeof skyMapSvg>[0] = { lDeg: l, bDeg: b, vPecKmS: vpec, markers };
      if (outlier) p.outlier = outlier;
      await put("plot-sky.svg", skyMapSvg(p), "Peculiar velocities on the sky in Galactic coordinates (Hammer equal-area)");
    }
  }
  return plots;
}
