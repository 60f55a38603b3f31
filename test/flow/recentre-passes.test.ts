/**
 * The log fit's passes (src/flow/recentre.ts LogPasses): summed chunk by chunk and added in chunk order,
 * so a fit gives the same numbers to the last bit whichever thread sums which chunk (the web view shares
 * the chunks with a worker, web/fit-threads.ts). Checked here with the chunks summed in other orders on
 * rows in a SharedArrayBuffer, as the page does.
 */
import { describe, expect, it } from "vitest";
import {
  logRowsBytes,
  logRowsOn,
  ONE_THREAD,
  PARTIAL_SUMS,
  PASS_CHUNK_ROWS,
  passChunk,
  passChunks,
  recentre,
  sumChunks,
  type LogPasses,
  type Recentred,
} from "../../src/flow/recentre.js";
import { makeMockUniverse } from "../../src/flow/mock.js";
import { flowPoints } from "../../src/flow/bulkflow.js";
import { flowRowsOf } from "./mock-rows.js";

/** A mock catalogue as the view and the CLI build it (flowPoints), with 20% distance errors. */
function mockPoints(n: number, seed: number) {
  const m = makeMockUniverse({ seed, n, rMaxMpc: 150, distErrFrac: 0.2, bulkFlowGal: [100, -300, 200] });
  return flowPoints(flowRowsOf(m), { h0: 70, omegaM: 0.3 });
}

/** Passes that sum the chunks in the order `order(chunks)` on rows in one SharedArrayBuffer. */
function passesInOrder(capacity: number, order: (chunks: number) => number[]): LogPasses & { passes: number } {
  const shared = logRowsOn(new SharedArrayBuffer(logRowsBytes(capacity)), 0, capacity, capacity);
  const self = {
    passes: 0,
    rows: (m: number) => ({ ...shared, m }),
    pass: (R: ReturnType<typeof logRowsOn>, P: Float64Array, out: Float64Array) => {
      const chunks = passChunks(R.m);
      const partials = new Float64Array(chunks * PARTIAL_SUMS);
      for (const c of order(chunks)) passChunk(R, c, P, partials);
      sumChunks(partials, chunks, out);
      self.passes++;
    },
  };
  return self;
}

function sameFit(a: Recentred, b: Recentred): void {
  expect(b.h0There).toBe(a.h0There);
  expect(b.h0ThereErr).toBe(a.h0ThereErr);
  expect(b.dipole).toEqual(a.dipole);
  expect(b.chi2).toBe(a.chi2);
  expect(b.nUsed).toBe(a.nUsed);
  expect(b.fitSteps).toBe(a.fitSteps);
}

describe("the log fit's passes", () => {
  const n = 5 * PASS_CHUNK_ROWS + 321; // several chunks and a short last one
  const pts = mockPoints(n, 606);
  const opts = { h0: 70, sigmaStar: 250, estimator: "log" as const };

  it("give the same fit to the last bit with the chunks summed backwards or interleaved", () => {
    const backwards = passesInOrder(n, (c) => Array.from({ length: c }, (_, k) => c - 1 - k));
    const interleaved = passesInOrder(n, (c) => [...Array.from({ length: c }, (_, k) => k).filter((k) => k % 2 === 1), ...Array.from({ length: c }, (_, k) => k).filter((k) => k % 2 === 0)]);
    for (const index of [3, 777, n - 1]) {
      const one = recentre(pts, { index }, opts);
      expect(one.estimator).toBe("log");
      expect(one.fitSteps).toBeGreaterThan(2);
      sameFit(one, recentre(pts, { index }, { ...opts, passes: backwards }));
      sameFit(one, recentre(pts, { index }, { ...opts, passes: interleaved }));
    }
    expect(backwards.passes).toBeGreaterThan(6);
  });

  it("reuse shared storage from fit to fit without carrying anything over", () => {
    const shared = passesInOrder(n, (c) => Array.from({ length: c }, (_, k) => k));
    // a group-like origin leaves rows out (a smaller fit), then a full fit on the same storage
    const use = new Uint8Array(n).fill(1);
    for (let i = 0; i < n; i += 3) use[i] = 0;
    const part = { ...pts, use };
    sameFit(recentre(part, { index: 10 }, opts), recentre(part, { index: 10 }, { ...opts, passes: shared }));
    sameFit(recentre(pts, { index: 11 }, opts), recentre(pts, { index: 11 }, { ...opts, passes: shared }));
  });

  it("sum a chunk's rows only: two halves add up to the whole pass", () => {
    const R = ONE_THREAD.rows(3);
    R.ax.set([1, 0, 0]);
    R.ay.set([0, 1, 0]);
    R.az.set([0, 0, 1]);
    R.q0.set([7000, 3500, 700]);
    R.lnD.set([Math.log(100), Math.log(50), Math.log(10)]);
    R.f.set([0.2, 0.2, 0.2]);
    R.member.fill(1);
    const P = new Float64Array(12);
    P[6] = 70;
    P[10] = 250 * 250;
    const whole = new Float64Array(PARTIAL_SUMS);
    ONE_THREAD.pass(R, P, whole);
    // seen from us in a pure Hubble flow the predicted distances are the observed ones: y = 0 for every row
    expect(whole[15]).toBe(3);
    expect(whole[10]).toBe(0);
    expect(whole[14]).toBe(0);
    // worked by hand from the formulas in logStepSums's comment: from us in a pure Hubble flow
    // kappa = H D, so the weights are 1 / ((H D f)^2 + sigma*^2) and a00 = sum w D^2
    const w = (d: number) => 1 / ((70 * d * 0.2) ** 2 + 250 ** 2);
    expect(whole[0]).toBeCloseTo(100 ** 2 * w(100) + 50 ** 2 * w(50) + 10 ** 2 * w(10), 12);
  });
});
