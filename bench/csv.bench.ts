/**
 * CSV reading and writing benchmark: `npm run bench csv`.
 *
 * Seeded data (made here when missing, in bench/out/csv/): a position table `pos-<n>.csv` (id, ra, dec
 * at full double precision, the shape of the cross-match inputs) and a joined table of 0.7 n rows with
 * the columns `peculiar match` writes (ids, positions of both sides, sep_arcsec with its unit,
 * n_candidates, ambiguous, row_a, row_b and the bookkeeping columns). Sizes n = 1e5 and 1e6.
 *
 * Reports medians of RUNS runs (after one warm-up) of wall and CPU time for
 * - read: `readTable(pos-<n>.csv)` (file bytes -> Arrow table, type inference included);
 * - write: `writeTable(joined, out.csv)` (Arrow table -> text -> file, atomic);
 * and, in a fresh child process each, the peak resident set of one read and of one write at the
 * largest size (process.resourceUsage().maxRSS, which includes the ~45 MB of a bare node).
 * When the cross-match benchmark's files exist (bench/out/crossmatch/out-<n>.csv), reads each one
 * back and writes it again and checks the bytes are identical (the writer's output is unchanged).
 */
import { spawnSync } from "node:child_process";
import { existsSync, mkdirSync, readFileSync, rmSync } from "node:fs";
import { join } from "node:path";
import { cpus, loadavg } from "node:os";
import { randomLcg, randomUniform } from "d3-random";
import type { Table } from "apache-arrow";
import { tableFromColumns, type ColumnData } from "../src/catalogue/columns.js";
import { readTable, writeTable } from "../src/catalogue/io.js";
import { DEG } from "../src/sky/angles.js";

const RUNS = Number(process.env.BENCH_RUNS ?? 5);
const SIZES = (process.env.BENCH_SIZES ?? "100000,1000000").split(",").map(Number);
const OUT = "bench/out/csv";
const CROSSMATCH = "bench/out/crossmatch";
let sink = 0;

function median(x: number[]): number {
  const s = [...x].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m]! : (s[m - 1]! + s[m]!) / 2;
}
function cpuNow(): number {
  const u = process.cpuUsage();
  return (u.user + u.system) / 1e6;
}
function fmt(s: number): string {
  return s < 1 ? `${(s * 1000).toFixed(0)} ms` : `${s.toFixed(2)} s`;
}

/** Seeded positions: uniform on the sphere, ids 1..n. */
function positions(n: number, seed: number): ColumnData[] {
  const u = randomUniform.source(randomLcg(seed))(0, 1);
  const id = new Int32Array(n);
  const ra = new Float64Array(n);
  const dec = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    id[i] = i + 1;
    ra[i] = 360 * u();
    dec[i] = Math.asin(2 * u() - 1) / DEG;
  }
  return [
    { name: "id", kind: "int32", values: id },
    { name: "ra", kind: "float64", values: ra },
    { name: "dec", kind: "float64", values: dec },
  ];
}

/** Seeded joined table with the columns of a cross-match output (every row matched, all valid). */
function joined(n: number, seed: number): Table {
  const m = Math.round(0.7 * n);
  const u = randomUniform.source(randomLcg(seed))(0, 1);
  const [aId, aRa, aDec] = positions(m, seed + 1);
  const bRa = new Float64Array(m);
  const bDec = new Float64Array(m);
  const sep = new Float64Array(m);
  const ids = new Int32Array(m);
  const ones = new Int32Array(m).fill(1);
  const amb = new Uint8Array(m);
  const rowA = new Int32Array(m);
  const rowB = new Int32Array(m);
  const valid = new Uint8Array(m).fill(1);
  const src = new Int32Array(m);
  for (let i = 0; i < m; i++) {
    bRa[i] = (aRa!.values as Float64Array)[i]! + (u() - 0.5) / 3600;
    bDec[i] = (aDec!.values as Float64Array)[i]! + (u() - 0.5) / 3600;
    sep[i] = 2 * u();
    ids[i] = i + 1;
    rowA[i] = i + 2;
    rowB[i] = i + 2;
    src[i] = i + 1;
    amb[i] = u() < 0.01 ? 1 : 0;
  }
  return tableFromColumns([
    { ...aId!, name: "a_id" },
    { ...aRa!, name: "a_ra" },
    { ...aDec!, name: "a_dec" },
    { name: "b_id", kind: "int32", values: ids },
    { name: "b_ra", kind: "float64", values: bRa },
    { name: "b_dec", kind: "float64", values: bDec },
    { name: "sep_arcsec", kind: "float64", values: sep, meta: { unit: "arcsec" } },
    { name: "n_candidates", kind: "int32", values: ones },
    { name: "ambiguous", kind: "bool", values: amb },
    { name: "row_a", kind: "int32", values: rowA },
    { name: "row_b", kind: "int32", values: rowB },
    { name: "valid", kind: "bool", values: valid },
    { name: "invalid_reason", kind: "utf8", values: new Array<string>(m).fill("") },
    { name: "source_row", kind: "int32", values: src },
  ]);
}

async function posFile(n: number): Promise<string> {
  const path = join(OUT, `pos-${n}.csv`);
  if (!existsSync(path)) await writeTable(tableFromColumns(positions(n, 20261201)), path);
  return path;
}

async function timeRuns(f: () => Promise<void>): Promise<{ wall: number; cpu: number }> {
  await f(); // warm-up
  const wall: number[] = [];
  const cpu: number[] = [];
  for (let r = 0; r < RUNS; r++) {
    (globalThis as { gc?: () => void }).gc?.();
    const w0 = performance.now();
    const c0 = cpuNow();
    await f();
    cpu.push(cpuNow() - c0);
    wall.push((performance.now() - w0) / 1000);
  }
  return { wall: median(wall), cpu: median(cpu) };
}

/** Child mode: one read or one write, then print the peak resident set. */
async function child(what: string, n: number): Promise<void> {
  if (what === "read") {
    const t = await readTable(await posFile(n));
    sink += t.numRows;
  } else {
    const t = joined(n, 7);
    const before = process.resourceUsage().maxRSS;
    await writeTable(t, join(OUT, `child-${n}.csv`));
    rmSync(join(OUT, `child-${n}.csv`));
    sink += t.numRows;
    process.stdout.write(JSON.stringify({ tableKiB: before }) + "\n");
  }
  process.stdout.write(JSON.stringify({ maxRssKiB: process.resourceUsage().maxRSS, sink }) + "\n");
}

async function main(): Promise<void> {
  mkdirSync(OUT, { recursive: true });
  console.log(`node ${process.version}, ${cpus().length} x ${cpus()[0]?.model ?? "?"}, load average ${loadavg().map((x) => x.toFixed(2)).join(" ")}, ${RUNS} runs`);
  console.log("| rows | read wall | read cpu | write rows | write wall | write cpu |");
  console.log("| ---: | ---: | ---: | ---: | ---: | ---: |");
  for (const n of SIZES) {
    const path = await posFile(n);
    const read = await timeRuns(async () => {
      const t = await readTable(path);
      sink += t.numRows;
    });
    const t = joined(n, 7);
    const out = join(OUT, `joined-${n}.csv`);
    const write = await timeRuns(() => writeTable(t, out));
    rmSync(out, { force: true });
    console.log(`| ${n} | ${fmt(read.wall)} | ${fmt(read.cpu)} | ${t.numRows} | ${fmt(write.wall)} | ${fmt(write.cpu)} |`);
  }
  const big = Math.max(...SIZES);
  for (const what of ["read", "write"]) {
    const r = spawnSync(process.execPath, [process.argv[1]!, "--child", what, String(big)], { encoding: "utf8" });
    const lines = r.stdout.trim().split("\n").map((l) => JSON.parse(l) as { maxRssKiB?: number; tableKiB?: number });
    const peak = lines.at(-1)?.maxRssKiB;
    const table = lines.find((l) => l.tableKiB !== undefined)?.tableKiB;
    console.log(`peak RSS, one ${what} at ${big} rows: ${peak ? (peak / 1024).toFixed(0) : "?"} MB${table ? ` (${(table / 1024).toFixed(0)} MB with the table built, before writing)` : ""}`);
  }
  for (const n of SIZES) {
    const sample = join(CROSSMATCH, `out-${n}.csv`);
    if (!existsSync(sample)) continue;
    const again = join(OUT, `again-${n}.csv`);
    await writeTable(await readTable(sample), again);
    const same = Buffer.compare(readFileSync(sample), readFileSync(again)) === 0;
    rmSync(again);
    console.log(`${sample} read and written again: ${same ? "identical bytes" : "DIFFERENT bytes"}`);
    if (!same) process.exitCode = 1;
  }
  if (sink === -1) console.log(sink);
}

if (process.argv[2] === "--child") await child(process.argv[3]!, Number(process.argv[4]));
else await main();
