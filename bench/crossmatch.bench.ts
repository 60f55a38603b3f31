/**
 * Cross-match benchmark: `npm run bench crossmatch`.
 *
 * Seeded all-sky pair: A uniform on the sphere; B = a 70 % subset of A jittered by 0.5 arcsec rms per
 * axis plus 30 % unrelated uniform rows; equal sizes, 1e5 and 1e6 rows. Radius 2 arcsec, select nearest.
 * Reports medians of RUNS runs: index build (unit vectors, grid, B sorted into cell order, A gathered
 * into cell order), match (query, pair sort, scoring, nearest), the whole CLI run from Arrow and from
 * CSV files (output written), the CLI's peak memory, and astropy's match_to_catalog_sky (load + match)
 * on the same CSV files in the same run, with the ratio. Baselines side by side: the brute-force twin
 * (3e3 x 3e3) and one SkyIndex (geokdbush) nearest query per row (1e5); the whole crossMatch on one
 * thread beside the same in two declination bands, one on a worker thread (dist/crossmatch-worker.js);
 * the CLI from Arrow with --threads 1 beside the default.
 * Kernels are warmed on a small odd-sized input first (V8 de-optimises a hot loop whose tail never ran).
 */
import { spawnSync } from "node:child_process";
import { existsSync, mkdirSync, readFileSync, rmSync } from "node:fs";
import { join } from "node:path";
import { cpus } from "node:os";
import { randomLcg, randomNormal, randomUniform } from "d3-random";
import { tableFromColumns } from "../src/catalogue/columns.js";
import { writeTable } from "../src/catalogue/io.js";
import { crossMatch, crossMatchBanded } from "../src/crossmatch/match.js";
import { BandPool } from "../src/crossmatch/threads.js";
import { buildZoneIndex, chooseCellRad, makeZoneGrid, occupiedAreaSr, PairBuffer, positionBlock, queryZoneIndex, skyPoints, sortPairs, sortQueries } from "../src/crossmatch/zones.js";
import { scoreCandidates, selectMatches } from "../src/crossmatch/select.js";
import { brutePairs } from "../src/crossmatch/brute.js";
import { SkyIndex } from "../src/crossmatch/sky-index.js";
import { ARCSEC, DEG } from "../src/sky/angles.js";

const RUNS = Number(process.env.BENCH_RUNS ?? 3);
const RADIUS_ARCSEC = 2;
const OUT = "bench/out/crossmatch";
const SIZES = (process.env.BENCH_SIZES ?? "100000,1000000").split(",").map(Number);
let sink = 0;

function makePair(n: number, seed: number) {
  const src = randomLcg(seed);
  const u = randomUniform.source(src)(0, 1);
  const g = randomNormal.source(src)(0, 0.5 / 3600);
  const raA = new Float64Array(n);
  const decA = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    raA[i] = 360 * u();
    decA[i] = Math.asin(2 * u() - 1) / DEG;
  }
  const raB = new Float64Array(n);
  const decB = new Float64Array(n);
  const kept = Math.round(0.7 * n);
  for (let j = 0; j < n; j++) {
    if (j < kept) {
      const i = j; // A is uniform and random, so its first 70 % rows are a random subset
      let d = decA[i]! + g();
      let r = raA[i]! + g() / Math.max(Math.cos(decA[i]! * DEG), 1e-9);
      if (d > 90) [d, r] = [180 - d, r + 180];
      if (d < -90) [d, r] = [-180 - d, r + 180];
      raB[j] = ((r % 360) + 360) % 360;
      decB[j] = d;
    } else {
      raB[j] = 360 * u();
      decB[j] = Math.asin(2 * u() - 1) / DEG;
    }
  }
  return { raA, decA, raB, decB };
}

function median(x: number[]): number {
  const s = [...x].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}

function fmt(s: number): string {
  return s < 1 ? `${(s * 1000).toFixed(0)} ms` : `${s.toFixed(2)} s`;
}

/** index build and match, separately, on the library kernels */
function cpuNow(): number {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1e6;
}

function timeKernels(raA: Float64Array, decA: Float64Array, raB: Float64Array, decB: Float64Array) {
  const R = RADIUS_ARCSEC * ARCSEC;
  const c0 = cpuNow();
  const t0 = performance.now();
  const a = positionBlock(raA, decA);
  const b = positionBlock(raB, decB);
  const grid = makeZoneGrid(chooseCellRad(R, b.length, occupiedAreaSr(b)));
  const index = buildZoneIndex(grid, b);
  const q = sortQueries(grid, a);
  const t1 = performance.now();
  const c1 = cpuNow();
  const buf = new PairBuffer(Math.min(a.length, 1 << 22));
  const nA = raA.length;
  const nB = raB.length;
  queryZoneIndex(index, q, R, buf);
  const pairs = sortPairs(buf.finish(), nA);
  const cand = scoreCandidates(pairs, { radiusRad: R });
  const chosen = selectMatches(cand, "nearest", nA, nB);
  const t2 = performance.now();
  const c2 = cpuNow();
  sink += chosen.length;
  return { index: (t1 - t0) / 1000, match: (t2 - t1) / 1000, cpuIndex: c1 - c0, cpuMatch: c2 - c1, matched: chosen.length };
}

function runCli(args: string[]): { seconds: number; cpu: number; rssMiB: number } {
  const rssFile = join(OUT, "rss.txt");
  rmSync(rssFile, { force: true });
  const t0 = performance.now();
  const r = spawnSync(process.execPath, ["--require", "./bench/crossmatch-rss.cjs", "dist/cli.js", ...args], { encoding: "utf8", env: { ...process.env, PECULIAR_BENCH_RSS: rssFile } });
  const seconds = (performance.now() - t0) / 1000;
  if (r.status !== 0) throw new Error(`CLI failed: ${r.stderr}`);
  const u = existsSync(rssFile) ? (JSON.parse(readFileSync(rssFile, "utf8")) as { maxRssKiB: number; cpuMicros: number }) : { maxRssKiB: NaN, cpuMicros: NaN };
  return { seconds, cpu: u.cpuMicros / 1e6, rssMiB: u.maxRssKiB / 1024 };
}

/** Each run's seconds, in run order, so the spread behind a median shows. */
function runs(xs: number[]): string {
  return xs.map((x) => x.toFixed(2)).join(" ");
}

function hasAstropy(): boolean {
  const r = spawnSync("/usr/bin/python3", ["-c", "import astropy"], { encoding: "utf8" });
  return r.status === 0;
}

async function main() {
  mkdirSync(OUT, { recursive: true });
  console.log(`node ${process.version}, ${cpus().length} x ${cpus()[0]?.model ?? "cpu"}; runs ${RUNS}; radius ${RADIUS_ARCSEC}"; load average at start ${(await import("node:os")).loadavg().map((x) => x.toFixed(1)).join(" ")}`);
  // warm-up on small odd-sized inputs, so every loop (and its tail) has run before timing
  for (let w = 0; w < 6; w++) {
    const p = makePair(1001 + 2 * w, 100 + w);
    timeKernels(p.raA, p.decA, p.raB.subarray(0, 999), p.decB.subarray(0, 999));
    sink += crossMatch({ raDeg: p.raA, decDeg: p.decA }, { raDeg: p.raB, decDeg: p.decB }, { radiusArcsec: RADIUS_ARCSEC }).chosen.length;
  }

  // baselines, side by side with the zone engine on the same inputs
  {
    const p = makePair(3000, 7);
    const a = skyPoints(p.raA, p.decA);
    const b = skyPoints(p.raB, p.decB);
    const tb: number[] = [];
    const tz: number[] = [];
    for (let r = 0; r < RUNS; r++) {
      let t = performance.now();
      sink += brutePairs(a, b, RADIUS_ARCSEC * ARCSEC).length;
      tb.push((performance.now() - t) / 1000);
      t = performance.now();
      sink += crossMatch({ raDeg: p.raA, decDeg: p.decA }, { raDeg: p.raB, decDeg: p.decB }, { radiusArcsec: RADIUS_ARCSEC }).chosen.length;
      tz.push((performance.now() - t) / 1000);
    }
    console.log(`baseline 3e3 x 3e3: brute force ${fmt(median(tb))}, zone engine (crossMatch) ${fmt(median(tz))}, ratio ${(median(tb) / median(tz)).toFixed(0)}x`);
  }
  {
    const p = makePair(100000, 8);
    const tg: number[] = [];
    const tz: number[] = [];
    for (let r = 0; r < RUNS; r++) {
      let t = performance.now();
      const idx = new SkyIndex(p.raB, p.decB);
      let m = 0;
      for (let i = 0; i < p.raA.length; i++) if (idx.nearest(p.raA[i]!, p.decA[i]!, RADIUS_ARCSEC / 3600).row >= 0) m++;
      tg.push((performance.now() - t) / 1000);
      sink += m;
      t = performance.now();
      sink += crossMatch({ raDeg: p.raA, decDeg: p.decA }, { raDeg: p.raB, decDeg: p.decB }, { radiusArcsec: RADIUS_ARCSEC }).chosen.length;
      tz.push((performance.now() - t) / 1000);
    }
    console.log(`baseline 1e5 x 1e5: one geokdbush query per row ${fmt(median(tg))}, zone engine ${fmt(median(tz))}, ratio ${(median(tg) / median(tz)).toFixed(1)}x`);
  }

  const astropy = hasAstropy();
  for (const n of SIZES) {
    const p = makePair(n, 42);
    const id = Int32Array.from({ length: n }, (_, i) => i + 1);
    const tA = tableFromColumns([
      { name: "id", kind: "int32", values: id },
      { name: "ra", kind: "float64", values: p.raA },
      { name: "dec", kind: "float64", values: p.decA },
    ]);
    const tB = tableFromColumns([
      { name: "id", kind: "int32", values: id.slice() },
      { name: "ra", kind: "float64", values: p.raB },
      { name: "dec", kind: "float64", values: p.decB },
    ]);
    const files = { aArrow: join(OUT, `a-${n}.arrow`), bArrow: join(OUT, `b-${n}.arrow`), aCsv: join(OUT, `a-${n}.csv`), bCsv: join(OUT, `b-${n}.csv`) };
    await writeTable(tA, files.aArrow);
    await writeTable(tB, files.bArrow);
    await writeTable(tA, files.aCsv);
    await writeTable(tB, files.bCsv);

    // the whole match (positions to chosen pairs) on one thread and on two (a worker takes a band)
    const one: number[] = [];
    const two: number[] = [];
    {
      const pool = new BandPool(2, new URL("../../dist/helper-worker.js", import.meta.url));
      const A = { raDeg: p.raA, decDeg: p.decA };
      const Bs = { raDeg: p.raB, decDeg: p.decB };
      await crossMatchBanded(A, Bs, { radiusArcsec: RADIUS_ARCSEC }, 2, pool.run); // the worker's warm-up
      for (let r = 0; r < RUNS; r++) {
        let t = performance.now();
        sink += crossMatch(A, Bs, { radiusArcsec: RADIUS_ARCSEC }).chosen.length;
        one.push((performance.now() - t) / 1000);
        t = performance.now();
        sink += (await crossMatchBanded(A, Bs, { radiusArcsec: RADIUS_ARCSEC }, 2, pool.run)).chosen.length;
        two.push((performance.now() - t) / 1000);
      }
      if (pool.size === 0) console.log("  (no worker script: npm run build first)");
    }
    const idx: number[] = [];
    const mat: number[] = [];
    const cidx: number[] = [];
    const cmat: number[] = [];
    let matched = 0;
    for (let r = 0; r < RUNS; r++) {
      (globalThis as { gc?: () => void }).gc?.();
      const k = timeKernels(p.raA, p.decA, p.raB, p.decB);
      idx.push(k.index);
      mat.push(k.match);
      cidx.push(k.cpuIndex);
      cmat.push(k.cpuMatch);
      matched = k.matched;
    }
    const arrow: number[] = [];
    const arrow1: number[] = [];
    const carrow1: number[] = [];
    const csv: number[] = [];
    const carrow: number[] = [];
    const ccsv: number[] = [];
    const rss: number[] = [];
    const py: number[] = [];
    let pyInfo = "";
    let pyError = "";
    for (let r = 0; r < RUNS; r++) {
      const x = runCli(["match", files.aArrow, files.bArrow, "-o", join(OUT, `out-${n}.arrow`), "--radius", `${RADIUS_ARCSEC}arcsec`, "-q"]);
      arrow.push(x.seconds);
      carrow.push(x.cpu);
      rss.push(x.rssMiB);
      const x1 = runCli(["match", files.aArrow, files.bArrow, "-o", join(OUT, `out-${n}.arrow`), "--radius", `${RADIUS_ARCSEC}arcsec`, "--threads", "1", "-q"]);
      arrow1.push(x1.seconds);
      carrow1.push(x1.cpu);
      const y = runCli(["match", files.aCsv, files.bCsv, "-o", join(OUT, `out-${n}.csv`), "--radius", `${RADIUS_ARCSEC}arcsec`, "-q"]);
      csv.push(y.seconds);
      ccsv.push(y.cpu);
      rss.push(y.rssMiB);
      if (astropy) {
        const z = spawnSync("/usr/bin/python3", ["bench/crossmatch-astropy.py", files.aCsv, files.bCsv, String(RADIUS_ARCSEC)], { encoding: "utf8" });
        if (z.status === 0) {
          const j = JSON.parse(z.stdout.trim()) as { total: number; load: number; match: number; astropy: string; matched: number };
          py.push(j.total);
          pyInfo = `astropy ${j.astropy} (load ${fmt(j.load)}, match ${fmt(j.match)}, ${j.matched} matched)`;
        } else pyError = z.error?.message ?? z.stderr.trim().split("\n").pop() ?? `status ${z.status}`;
      }
    }
    const ia = median(idx);
    const ma = median(mat);
    console.log(`\n${n.toExponential(0)} x ${n.toExponential(0)} at ${RADIUS_ARCSEC}": ${matched} matched (nearest)`);
    console.log(`  wall: index build ${fmt(ia)}   match ${fmt(ma)}   index + match ${fmt(ia + ma)}   (CPU: ${fmt(median(cidx))} + ${fmt(median(cmat))})`);
    console.log(`  wall: whole match (positions to chosen pairs) on 1 thread ${fmt(median(one))}, on 2 threads (worker bands) ${fmt(median(two))}`);
    console.log(`  wall: CLI from Arrow on 1 thread (--threads 1) ${fmt(median(arrow1))} (CPU ${fmt(median(carrow1))})`);
    console.log(`  wall: CLI from Arrow ${fmt(median(arrow))}   CLI from CSV ${fmt(median(csv))}   (CPU: ${fmt(median(carrow))}, ${fmt(median(ccsv))})   peak RSS ${Math.max(...rss).toFixed(0)} MiB`);
    console.log(`  runs (wall, s): Arrow ${runs(arrow)}; CSV ${runs(csv)}${py.length ? `; astropy ${runs(py)}` : ""}`);
    if (py.length) {
      const t = median(py);
      console.log(`  ${pyInfo}: load + match ${fmt(t)}; ratio astropy / CLI: Arrow ${(t / median(arrow)).toFixed(1)}x, CSV ${(t / median(csv)).toFixed(1)}x`);
    } else if (pyError) console.log(`  astropy: bench/crossmatch-astropy.py failed: ${pyError} (match_to_catalog_sky needs scipy: apt-get install python3-scipy)`);
    else console.log("  astropy: not available (/usr/bin/python3 without astropy)");
  }
  console.log(`\n(sink ${sink})`);
}

await main();
