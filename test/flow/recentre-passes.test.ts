/**
 * Re-centring's row loops as chunk kernels (src/flow/recentre-kernels.ts): chunk sums are added in chunk
 * order, so a fit gives the same numbers to the last bit whichever thread runs which chunk (the web view
 * shares the chunks with a worker, web/fit-threads.ts). Checked here with the chunks run in other
 * orders on one workspace in a SharedArrayBuffer, reused from fit to fit, as the page does.
 */
import { describe, expect, it } from "vitest";
import { recentre, type Recentred } from "../../src/flow/recentre.js";
import { CHUNK_ROWS, KERNELS, ONE_THREAD, P_H0, P_HAS_ERR, P_PACK, P_SS2, POINT_ROWS, SETUP, workBytes, workOn, type KernelId, type RecentreThreads, type RecentreWork } from "../../src/flow/recentre-kernels.js";
import { makeMockUniverse } from "../../src/flow/mock.js";
import { flowPoints } from "../../src/flow/bulkflow.js";
import { flowRowsOf } from "./mock-rows.js";

/** A mock catalogue as the view and the CLI build it (flowPoints), with 20% distance errors. */
function mockPoints(n: number, seed: number) {
  const m = makeMockUniverse({ seed, n, rMaxMpc: 150, distErrFrac: 0.2, bulkFlowGal: [100, -300, 200] });
  return flowPoints(flowRowsOf(m), { h0: 70, omegaM: 0.3 });
}

/** One shared workspace, its chunks run in the order `order(chunks)`. */
function sharedInOrder(capacity: number, order: (chunks: number) => number[]): RecentreThreads & { runs: number } {
  const w = workOn(new SharedArrayBuffer(workBytes(capacity)), 0, capacity);
  const self = {
    runs: 0,
    work(points: Parameters<RecentreThreads["work"]>[0]): RecentreWork {
      w.n = points.x.length;
      w.x.set(points.x);
      w.y.set(points.y);
      w.z.set(points.z);
      w.vr.set(points.vr);
      if (points.vrErr) w.vrErr.set(points.vrErr);
      if (points.use) w.use.set(points.use);
      return w;
    },
    run(work: RecentreWork, kernel: KernelId, chunks: number) {
      for (const c of order(chunks)) KERNELS[kernel]!(work, c);
      self.runs++;
    },
    results: (work: RecentreWork) => ({ s: work.s.slice(0, work.n), vAB: work.vAB.slice(0, work.n), cosL: work.cosL.slice(0, work.n), used: work.used.slice(0, work.n) }),
  };
  return self;
}

function sameFit(a: Recentred, b: Recentred): void {
  expect(b.h0There).toBe(a.h0There);
  expect(b.h0ThereErr).toBe(a.h0ThereErr);
  expect(b.dipole).toEqual(a.dipole);
  expect(b.chi2).toBe(a.chi2);
  expect(b.residualRmsThere).toBe(a.residualRmsThere);
  expect(b.nUsed).toBe(a.nUsed);
  expect(b.fitSteps).toBe(a.fitSteps);
  expect(b.vAB).toEqual(a.vAB);
  expect(b.used).toEqual(a.used);
}

const range = (c: number) => Array.from({ length: c }, (_, k) => k);

describe("re-centring's chunk kernels", () => {
  const n = 5 * CHUNK_ROWS + 321; // several chunks and a short last one
  const pts = mockPoints(n, 606);
  const opts = { h0: 70, sigmaStar: 250 };

  it("give the same fit to the last bit with the chunks run backwards or interleaved", () => {
    const backwards = sharedInOrder(n, (c) => range(c).reverse());
    const interleaved = sharedInOrder(n, (c) => [...range(c).filter((k) => k % 2 === 1), ...range(c).filter((k) => k % 2 === 0)]);
    for (const index of [3, 777, n - 1]) {
      const one = recentre(pts, { index }, opts);
      expect(one.estimator).toBe("log");
      expect(one.fitSteps).toBeGreaterThan(2);
      sameFit(one, recentre(pts, { index }, { ...opts, threads: backwards }));
      sameFit(one, recentre(pts, { index }, { ...opts, threads: interleaved }));
    }
    // setup, the log fit's passes and the residuals all ran through the workspace
    expect(backwards.runs).toBeGreaterThan(3 * 5);
  });

  it("reuse one workspace from fit to fit without carrying anything over", () => {
    const shared = sharedInOrder(n, range);
    // a group-like origin leaves rows out, then a smaller catalogue, then a full fit on the same storage
    const use = new Uint8Array(n).fill(1);
    for (let i = 0; i < n; i += 3) use[i] = 0;
    const part = { ...pts, use };
    sameFit(recentre(part, { index: 10 }, opts), recentre(part, { index: 10 }, { ...opts, threads: shared }));
    const small = { x: pts.x.slice(0, 999), y: pts.y.slice(0, 999), z: pts.z.slice(0, 999), vr: pts.vr.slice(0, 999), vrErr: pts.vrErr.slice(0, 999) };
    sameFit(recentre(small, { index: 5 }, opts), recentre(small, { index: 5 }, { ...opts, threads: shared }));
    sameFit(recentre(pts, { index: 11 }, opts), recentre(pts, { index: 11 }, { ...opts, threads: shared }));
    // the linear estimator and the major form through the same workspace
    for (const o of [{ ...opts, estimator: "linear" as const }, { ...opts, form: "major" as const }]) sameFit(recentre(pts, { index: 12 }, o), recentre(pts, { index: 12 }, { ...o, threads: shared }));
  });

  it("give the same fit to the last bit when the rows of the points alone are made once and kept (POINT_ROWS)", () => {
    const kept = sharedInOrder(n, range);
    let made = 0;
    let madeFor = NaN;
    const threads: RecentreThreads = {
      ...kept,
      pointRows(w, chunks) {
        if (w.P[P_H0] !== madeFor) {
          kept.run(w, POINT_ROWS, chunks);
          madeFor = w.P[P_H0]!;
          made++;
        }
        return true;
      },
    };
    // origins on and off the catalogue, rows left out, and another H0 (the fractional errors change)
    const use = new Uint8Array(n).fill(1);
    for (let i = 0; i < n; i += 5) use[i] = 0;
    for (const [index, p, o] of [
      [3, pts, opts],
      [777, { ...pts, use }, opts],
      [n - 1, pts, { ...opts, h0: 73 }],
      [40, pts, { ...opts, h0: 73 }],
    ] as const) {
      sameFit(recentre(p, { index }, o), recentre(p, { index }, { ...o, threads }));
    }
    const free = { x: 10, y: -20, z: 5, vr: 900 };
    sameFit(recentre(pts, free, opts), recentre(pts, free, { ...opts, threads }));
    expect(made).toBe(3);
  });

  it("write only their own chunk's rows", () => {
    const w = ONE_THREAD.work(pts, true);
    w.P[P_H0] = 70;
    w.P[P_SS2] = 250 * 250;
    w.P[P_HAS_ERR] = 1;
    w.P[P_PACK] = 1;
    w.s.fill(-1);
    KERNELS[SETUP]!(w, 2);
    for (let i = 0; i < n; i++) expect(w.s[i] === -1).toBe(i < 2 * CHUNK_ROWS || i >= 3 * CHUNK_ROWS);
  });
});
