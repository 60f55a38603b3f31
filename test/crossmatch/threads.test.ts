import { describe, expect, it, beforeAll } from "vitest";
import { readFileSync } from "node:fs";
import { join } from "node:path";
import { pathToFileURL } from "node:url";
import { crossMatch, crossMatchBanded, type MatchResult, type MatchSide } from "../../src/crossmatch/match.js";
import { BandPool } from "../../src/crossmatch/threads.js";
import { brutePairs } from "../../src/crossmatch/brute.js";
import { skyPoints } from "../../src/crossmatch/zones.js";
import { tableFromColumns } from "../../src/catalogue/columns.js";
import { writeTable } from "../../src/catalogue/io.js";
import { SELECT_MODES } from "../../src/crossmatch/select.js";
import { randomLcg, randomUniform } from "d3-random";
import { ARCSEC, DEG } from "../../src/sky/angles.js";
import { buildOnce, ROOT, runCli, tempDir } from "../cli-helpers.js";
import { hardSky, withCopies } from "./sky-fixtures.js";

function same(got: MatchResult, want: MatchResult): void {
  expect(Array.from(got.candidates.a)).toEqual(Array.from(want.candidates.a));
  expect(Array.from(got.candidates.b)).toEqual(Array.from(want.candidates.b));
  expect(Array.from(got.candidates.sepRad)).toEqual(Array.from(want.candidates.sepRad));
  expect(Array.from(got.chosen)).toEqual(Array.from(want.chosen));
  expect(Array.from(got.ambiguous)).toEqual(Array.from(want.ambiguous));
  expect(Array.from(got.nCandidates)).toEqual(Array.from(want.nCandidates));
  expect([got.usableA, got.usableB, got.nA, got.nB]).toEqual([want.usableA, want.usableB, want.nA, want.nB]);
}

const A = hardSky(601, 21);
const B = withCopies(hardSky(499, 22), A, 80);
const sideA: MatchSide = { raDeg: A.ra, decDeg: A.dec, velocityKmS: Float64Array.from(A.ra, (_, i) => 4000 + ((i * 37) % 600)) };
const sideB: MatchSide = { raDeg: B.ra, decDeg: B.dec, velocityKmS: Float64Array.from(B.ra, (_, i) => 4000 + ((i * 53) % 600)) };

describe("sky bands run separately", () => {
  for (const bands of [1, 2, 5]) {
    for (const select of SELECT_MODES) {
      it(`give the single-thread result in ${bands} band(s), --select ${select}, poles and seam included`, async () => {
        const o = { radiusArcsec: 5, maxDvKmS: 400, select };
        same(await crossMatchBanded(sideA, sideB, o, bands), crossMatch(sideA, sideB, o));
      });
    }
  }

  it("find the brute-force pair set when every band runs on its own", async () => {
    const r = await crossMatchBanded({ raDeg: A.ra, decDeg: A.dec }, { raDeg: B.ra, decDeg: B.dec }, { radiusArcsec: 30, select: "all" }, 7);
    const want = brutePairs(skyPoints(A.ra, A.dec), skyPoints(B.ra, B.dec), 30 * ARCSEC);
    expect(want.length).toBeGreaterThan(100);
    expect(Array.from(r.candidates.a, (a, k) => `${a}-${r.candidates.b[k]}`)).toEqual(Array.from(want.a, (a, k) => `${a}-${want.b[k]}`));
    expect(Array.from(r.candidates.sepRad)).toEqual(Array.from(want.sepRad));
  });
});

describe("the worker pool", () => {
  beforeAll(() => buildOnce());
  const workerUrl = pathToFileURL(join(ROOT, "dist", "helper-worker.js"));

  // (the pools' helpers are the process's shared ones: idle, they do not keep it alive)
  it("runs bands on a helper thread of the built bundle with the single-thread result", async () => {
    const pool = new BandPool(2, workerUrl);
    expect(pool.size).toBe(1);
    for (const bands of [2, 3]) same(await crossMatchBanded(sideA, sideB, { radiusArcsec: 5 }, bands, pool.run), crossMatch(sideA, sideB, { radiusArcsec: 5 }));
    expect(pool.bandsOnHelpers).toBeGreaterThan(0);
  });

  it("runs a failed helper's bands on the calling thread", async () => {
    const pool = new BandPool(2, new URL("data:text/javascript,throw new Error('no worker here')"));
    same(await crossMatchBanded(sideA, sideB, { radiusArcsec: 5 }, 4, pool.run), crossMatch(sideA, sideB, { radiusArcsec: 5 }));
    expect(pool.bandsOnHelpers).toBe(0);
  });

  it("without a worker script runs every band here", async () => {
    const pool = new BandPool(3, undefined);
    expect(pool.size).toBe(0);
    same(await crossMatchBanded(sideA, sideB, { radiusArcsec: 5 }, 3, pool.run), crossMatch(sideA, sideB, { radiusArcsec: 5 }));
  });
});

describe("peculiar match on threads", () => {
  beforeAll(() => buildOnce());

  it("writes the same file with --threads 2 as with --threads 1", async () => {
    const { dir, cleanup } = tempDir();
    try {
      // 60 000 rows each (an explicit --threads uses the workers at any size): uniform sky, and
      // B = A's first 40 000 rows moved by up to 1 arcsec plus 20 000 unrelated rows
      const n = 60_000;
      const u = randomUniform.source(randomLcg(33))(0, 1);
      const uniform = (m: number) => ({ ra: Float64Array.from({ length: m }, () => 360 * u()), dec: Float64Array.from({ length: m }, () => Math.asin(2 * u() - 1) / DEG) });
      const S = uniform(n);
      const T = uniform(n);
      for (let i = 0; i < 40_000; i++) {
        T.dec[i] = Math.max(-90, Math.min(90, S.dec[i]! + (u() - 0.5) / 3600));
        T.ra[i] = S.ra[i]!;
      }
      const id = Int32Array.from({ length: n }, (_, i) => i + 1);
      await writeTable(tableFromColumns([{ name: "id", kind: "int32", values: id }, { name: "ra", kind: "float64", values: S.ra }, { name: "dec", kind: "float64", values: S.dec }]), join(dir, "a.arrow"));
      await writeTable(tableFromColumns([{ name: "id", kind: "int32", values: id.slice() }, { name: "ra", kind: "float64", values: T.ra }, { name: "dec", kind: "float64", values: T.dec }]), join(dir, "b.arrow"));
      for (const t of ["1", "2"]) {
        const r = runCli(["match", join(dir, "a.arrow"), join(dir, "b.arrow"), "-o", join(dir, `o${t}.arrow`), "--radius", "3arcsec", "--join", "outer", "--threads", t, "-q"]);
        expect(r.stderr).toBe("");
        expect(r.code).toBe(0);
      }
      expect(readFileSync(join(dir, "o2.arrow")).equals(readFileSync(join(dir, "o1.arrow")))).toBe(true);
    } finally {
      cleanup();
    }
  });
});
